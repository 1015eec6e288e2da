// The database schema (Drizzle). One file while it is small; split per area when it grows.
// Migrations are generated from this file into drizzle/ with `npm run db:generate` and committed.
import { boolean, integer, pgTable, serial, text, timestamp, uniqueIndex } from "drizzle-orm/pg-core";

/** A project: one shelf study area in one projected CRS, with its members, data and results. */
export const projects = pgTable(
  "projects",
  {
    id: serial("id").primaryKey(),
    slug: text("slug").notNull(),
    name: text("name").notNull(),
    summary: text("summary").notNull().default(""),
    /** EPSG code of the project's projected CRS (metres); every layer is analysed in it. */
    crsEpsg: integer("crs_epsg").notNull(),
    /** True for the invented demonstration project seeded on an empty database. */
    isDemo: boolean("is_demo").notNull().default(false),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex("projects_slug_key").on(t.slug)],
);
