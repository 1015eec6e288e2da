import { defineConfig } from "vitest/config";
import path from "node:path";

const alias = { "~": path.resolve(import.meta.dirname, "app") };

export default defineConfig({
  resolve: { alias },
  test: {
    projects: [
      {
        resolve: { alias },
        test: {
          name: "unit",
          include: ["app/**/*.test.{ts,tsx}", "scripts/**/*.test.ts", "jobs/**/*.test.ts"],
          exclude: ["**/*.int.test.{ts,tsx}", "node_modules/**"],
          environment: "node",
          testTimeout: 60_000,
        },
      },
      {
        resolve: { alias },
        test: {
          name: "integration",
          include: ["**/*.int.test.{ts,tsx}"],
          exclude: ["node_modules/**", "tests/e2e/**"],
          environment: "node",
          setupFiles: ["tests/support/integration-setup.ts"],
          testTimeout: 60_000,
          hookTimeout: 60_000,
        },
      },
    ],
  },
});
