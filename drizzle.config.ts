import { defineConfig } from "drizzle-kit";

export default defineConfig({
  dialect: "postgresql",
  // schema.ts: the integrator's tables; live-schema.ts: the weighing sessions (issue 13).
  schema: ["./app/db/schema.ts", "./app/db/live-schema.ts"],
  out: "./drizzle",
  dbCredentials: { url: process.env.DATABASE_URL ?? "" },
});
