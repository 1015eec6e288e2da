// The test object every browser test imports: baseURL comes from the server the global setup
// started; `stateFor(role)` is that role's signed-in cookie, made once per run by the global setup.
import { test as base, expect } from "@playwright/test";
import path from "node:path";
import type { Role } from "../../app/permissions";

export const AUTH_DIR = path.resolve(import.meta.dirname, "../.auth");

export function stateFor(role: Role): string {
  return path.join(AUTH_DIR, `${role}.json`);
}

export const test = base.extend({
  baseURL: async ({}, use) => {
    const url = process.env.E2E_BASE_URL;
    if (!url) throw new Error("E2E_BASE_URL is not set: run the browser tests through `npm test`.");
    await use(url);
  },
});
export { expect };

/**
 * Runs `fn` with the job worker paused (SIGSTOP, then SIGCONT), as if it were busy elsewhere: runs
 * started meanwhile wait in the queue. A real process signal, not a switch in the product.
 */
export async function withWorkerHeld<T>(fn: () => Promise<T>): Promise<T> {
  const pid = Number(process.env.E2E_WORKER_PID);
  if (!Number.isInteger(pid) || pid <= 0) throw new Error("E2E_WORKER_PID is not set: run the browser tests through `npm test`.");
  process.kill(pid, "SIGSTOP");
  try {
    return await fn();
  } finally {
    process.kill(pid, "SIGCONT");
  }
}

/** Waits until the demo's seeded reconstruction is published (it is queued at seed) and returns its id. */
export async function demoReconstructionPublished(page: import("@playwright/test").Page): Promise<string> {
  await page.goto("/");
  await page.getByRole("link", { name: /Corrastan Shelf/ }).click();
  await page.getByRole("navigation", { name: "Project" }).getByRole("link", { name: "Reconstructions" }).click();
  await page.getByRole("link", { name: "Demo: last deglaciation" }).click();
  await expect(page.getByTestId("reconstruction")).toHaveAttribute("data-status", "published", { timeout: 120_000 });
  return /\/reconstructions\/(\d+)/.exec(page.url())![1];
}

/**
 * Scores the project's adopted weight-set version on the reconstruction at `target` through the API,
 * as an analyst or lead would (an identical request reuses the scoring), and waits until it is
 * published. Returns the scoring's id.
 */
export async function scoreAdoptedVersion(
  request: import("@playwright/test").APIRequestContext,
  origin: string,
  projectId: string | number,
  reconstructionId: number,
  target: { kind: "age"; ageKa: number } | { kind: "period"; name: string },
): Promise<number> {
  const adopted = (await (await request.get(`/api/projects/${projectId}/weight-sets/adopted`)).json()) as { adopted: { versionId: number } | null };
  expect(adopted.adopted?.versionId, "the demo adopts a weight-set version").toBeTruthy();
  const started = await request.post(`/api/projects/${projectId}/scorings`, { headers: { Origin: origin }, data: { reconstructionId, weightSetVersionId: adopted.adopted!.versionId, target } });
  expect([200, 202], await started.text()).toContain(started.status());
  const scoringId = ((await started.json()) as { scoring: { id: number } }).scoring.id;
  await expect
    .poll(async () => ((await (await request.get(`/api/scorings/${scoringId}`)).json()) as { scoring: { status: string } }).scoring.status, { timeout: 180_000 })
    .toBe("published");
  return scoringId;
}
