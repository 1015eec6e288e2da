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
