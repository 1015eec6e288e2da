// Starts the built app (BUILD_DIR, default build-test) on a free port with a database cloned from
// the migrated template and seeded with the demo; tests read the address from E2E_BASE_URL.
import { spawn, execFileSync, type ChildProcess } from "node:child_process";
import net from "node:net";
import path from "node:path";
import fs from "node:fs";
import os from "node:os";
import { createTestDatabase, dropTestDatabase } from "../support/test-db";
import { demoUsers } from "../../scripts/demo/demo-data";
import { AUTH_DIR } from "./fixtures";

const root = path.resolve(import.meta.dirname, "../..");

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.unref();
    s.on("error", reject);
    s.listen(0, "127.0.0.1", () => {
      const { port } = s.address() as net.AddressInfo;
      s.close(() => resolve(port));
    });
  });
}

async function waitForHealth(url: string, child: ChildProcess, log: () => string): Promise<void> {
  const deadline = Date.now() + 60_000;
  while (Date.now() < deadline) {
    if (child.exitCode !== null) throw new Error(`the app exited during start-up:\n${log()}`);
    try {
      const res = await fetch(`${url}/healthz`);
      if (res.ok) return;
    } catch {
      /* not listening yet */
    }
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`the app did not answer /healthz within 60 s:\n${log()}`);
}

/** Signs each demo role in once through POST /login and keeps the cookie for the tests (tests/.auth/). */
async function signInDemoRoles(baseUrl: string) {
  fs.mkdirSync(AUTH_DIR, { recursive: true });
  for (const u of demoUsers) {
    const res = await fetch(`${baseUrl}/login`, {
      method: "POST",
      redirect: "manual",
      headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: baseUrl },
      body: new URLSearchParams({ email: u.email, password: u.password }),
    });
    const m = /lowstand_session=([^;]+)/.exec(res.headers.get("set-cookie") ?? "");
    if (res.status !== 302 || !m) throw new Error(`demo sign-in as ${u.role} failed: ${res.status}`);
    const state = {
      cookies: [{ name: "lowstand_session", value: m[1], domain: "127.0.0.1", path: "/", expires: -1, httpOnly: true, secure: false, sameSite: "Lax" }],
      origins: [],
    };
    fs.writeFileSync(path.join(AUTH_DIR, `${u.role}.json`), JSON.stringify(state));
  }
}

export default async function globalSetup() {
  const { name, url: databaseUrl } = await createTestDatabase("e2e");
  const scratch = fs.mkdtempSync(path.join(os.tmpdir(), "lowstand-e2e-"));
  const env = {
    ...process.env,
    DATABASE_URL: databaseUrl,
    STORAGE_DRIVER: "fs",
    STORAGE_DIR: path.join(scratch, "storage"),
    UPLOAD_TMP_DIR: path.join(scratch, "tmp"),
  };
  execFileSync(process.execPath, ["scripts/run-ts.mjs", "scripts/seed.ts"], { cwd: root, env, stdio: "inherit" });

  const port = await freePort();
  const smtpPort = await freePort();
  const baseUrl = `http://127.0.0.1:${port}`;
  let output = "";
  const serverEnv = {
    ...env,
    NODE_ENV: "production",
    PORT: String(port),
    HOST: "127.0.0.1",
    PUBLIC_URL: baseUrl,
    BUILD_DIR: process.env.BUILD_DIR ?? "build-test",
    LOG_REQUESTS: "0",
    // Mail goes over SMTP to a catcher inside the app process, readable at /dev/outbox.
    LOWSTAND_MAIL_CATCHER_PORT: String(smtpPort),
    SMTP_URL: `smtp://127.0.0.1:${smtpPort}`,
    LOWSTAND_DEV_OUTBOX: "1",
    LOWSTAND_ENGINE_THREADS: "2",
  };
  const child = spawn(process.execPath, ["server.mjs"], { cwd: root, env: serverEnv, stdio: ["ignore", "pipe", "pipe"] });
  child.stdout!.on("data", (d) => (output += d));
  child.stderr!.on("data", (d) => (output += d));
  // One job worker beside the server, as `npm start` runs it.
  const worker = spawn(process.execPath, ["scripts/run-ts.mjs", "jobs/worker.ts"], { cwd: root, env: { ...serverEnv }, stdio: ["ignore", "pipe", "pipe"] });
  worker.stdout!.on("data", (d) => (output += d));
  worker.stderr!.on("data", (d) => (output += d));
  await waitForHealth(baseUrl, child, () => output);
  process.env.E2E_BASE_URL = baseUrl;
  process.env.E2E_DATABASE_URL = databaseUrl;
  process.env.E2E_WORKER_PID = String(worker.pid);
  await signInDemoRoles(baseUrl);

  return async () => {
    child.kill("SIGTERM");
    worker.kill("SIGTERM");
    await Promise.all([new Promise((r) => child.once("exit", r)), new Promise((r) => worker.once("exit", r))]);
    await dropTestDatabase(name);
    fs.rmSync(scratch, { recursive: true, force: true });
  };
}
