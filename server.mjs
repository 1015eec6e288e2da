// The production server: Express in front of the React Router build.
//   node server.mjs            (PORT, HOST, BUILD_DIR, TRUST_PROXY from the environment)
// See docs/decisions/001-server.md.
import { createRequestHandler } from "@react-router/express";
import compression from "compression";
import express from "express";
import { randomBytes } from "node:crypto";
import path from "node:path";
import { pathToFileURL } from "node:url";

const port = Number(process.env.PORT ?? 3000);
const host = process.env.HOST ?? "127.0.0.1";
const buildDir = path.resolve(import.meta.dirname, process.env.BUILD_DIR ?? "build");

const app = express();
app.disable("x-powered-by");
// Behind a reverse proxy, set TRUST_PROXY (e.g. "loopback" or a hop count) so req.ip is the client's.
if (process.env.TRUST_PROXY) {
  const v = process.env.TRUST_PROXY;
  app.set("trust proxy", /^\d+$/.test(v) ? Number(v) : v);
}

// Compress everything except event streams, which must reach the client event by event.
app.use(
  compression({
    filter(req, res) {
      const type = String(res.getHeader("Content-Type") ?? "");
      if (type.startsWith("text/event-stream")) return false;
      return compression.filter(req, res);
    },
  }),
);

// Request id and one log line per request.
app.use((req, res, next) => {
  const id = randomBytes(6).toString("hex");
  res.locals.requestId = id;
  res.setHeader("X-Request-Id", id);
  const started = process.hrtime.bigint();
  res.on("finish", () => {
    if (process.env.LOG_REQUESTS === "0") return;
    const ms = Number(process.hrtime.bigint() - started) / 1e6;
    console.log(`${req.method} ${req.originalUrl} ${res.statusCode} ${ms.toFixed(0)}ms ${id}`);
  });
  next();
});

// Fingerprinted assets are immutable; everything else in public/ may change between releases.
app.use("/assets", express.static(path.join(buildDir, "client/assets"), { immutable: true, maxAge: "1y" }));
app.use(express.static(path.join(buildDir, "client"), { maxAge: "1h" }));

const build = await import(pathToFileURL(path.join(buildDir, "server/index.js")).href);
app.use(
  createRequestHandler({
    build,
    getLoadContext: (req, res) => ({
      clientAddress: req.ip ?? req.socket.remoteAddress ?? "",
      requestId: res.locals.requestId,
    }),
  }),
);

const server = app.listen(port, host, () => {
  console.log(`[web] Lowstand listening on http://${host}:${port}`);
});
// Sane timeouts: slow clients may not hold a socket forever while sending headers or a body,
// but long uploads get time; responses (event streams, downloads) are not cut off.
server.headersTimeout = 30_000;
server.requestTimeout = 15 * 60_000;
server.keepAliveTimeout = 65_000;

function shutdown(signal) {
  console.log(`[web] ${signal}: closing`);
  server.close(() => process.exit(0));
  server.closeIdleConnections?.();
  setTimeout(() => process.exit(0), 5_000).unref();
}
process.on("SIGTERM", () => shutdown("SIGTERM"));
process.on("SIGINT", () => shutdown("SIGINT"));
