// The test object every browser test imports: baseURL comes from the server the global setup started.
import { test as base, expect } from "@playwright/test";

export const test = base.extend({
  baseURL: async ({}, use) => {
    const url = process.env.E2E_BASE_URL;
    if (!url) throw new Error("E2E_BASE_URL is not set: run the browser tests through `npm test`.");
    await use(url);
  },
});
export { expect };
