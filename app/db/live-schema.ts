// Tables of the weighing sessions (issue 13, design §4 group weights and §8 live collaboration): a
// project's team meets in a session, each member with `weights.edit` holds a proposal, everyone
// comments, and the lead adopts the outcome. Every change is also an event, numbered per session,
// which the live stream (app/live.server.ts, routes/live.session-events.ts) delivers and a
// reconnecting browser catches up from. Kept apart from schema.ts (which the integrator owns);
// drizzle.config.ts reads both. See docs/decisions/801-live-weighing-sessions.md.
import { bigint, index, integer, jsonb, pgEnum, pgTable, primaryKey, serial, text, timestamp, uniqueIndex } from "drizzle-orm/pg-core";
import { projects, users, weightSetVersions } from "./schema";

export const weighingMethod = pgEnum("weighing_method", ["direct", "ahp"]);
export const weighingStatus = pgEnum("weighing_status", ["open", "closed"]);

/** What the lead made of a session when closing it (null: closed without adopting anything). */
export interface WeighingOutcome {
  /** the group result, or one member's proposal */
  source: { kind: "group" } | { kind: "proposal"; userId: number; name: string };
  weightSetId: number;
  weightSetName: string;
  versionId: number;
  version: number;
  /** true when the version also became the project's adopted weight set */
  adopted: boolean;
  rationale: string;
}

/**
 * One weighing session. `lastSeq` is the number of the session's newest event: a writer takes the
 * next one with `UPDATE … SET last_seq = last_seq + 1 RETURNING`, which holds the row lock until its
 * transaction commits, so events are numbered 1, 2, 3 … without gaps and committed in that order.
 */
export const weighingSessions = pgTable(
  "weighing_sessions",
  {
    id: serial("id").primaryKey(),
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    title: text("title").notNull(),
    method: weighingMethod("method").notNull(),
    /** AHP sessions: the factors everyone compares, in matrix order (2–10); [] for direct weights */
    ahpFactors: jsonb("ahp_factors").$type<string[]>().notNull().default([]),
    /** The weight-set content every proposal starts from (curves, preservation, periods). */
    baseContent: jsonb("base_content").$type<Record<string, unknown>>().notNull(),
    /** The weight-set version the base was copied from, if any. */
    baseVersionId: integer("base_version_id").references(() => weightSetVersions.id, { onDelete: "set null" }),
    status: weighingStatus("status").notNull().default("open"),
    lastSeq: bigint("last_seq", { mode: "number" }).notNull().default(0),
    startedBy: integer("started_by").references(() => users.id, { onDelete: "set null" }),
    startedAt: timestamp("started_at", { withTimezone: true }).notNull().defaultNow(),
    closedBy: integer("closed_by").references(() => users.id, { onDelete: "set null" }),
    closedAt: timestamp("closed_at", { withTimezone: true }),
    /** The weights the session ended with (the adopted content), kept for the record. */
    finalContent: jsonb("final_content").$type<Record<string, unknown> | null>(),
    outcome: jsonb("outcome").$type<WeighingOutcome | null>(),
  },
  (t) => [index("weighing_sessions_project_idx").on(t.projectId, t.startedAt)],
);

/** A member's proposal in a session: a whole weight-set content, edited in place (the events keep its history). */
export const weighingProposals = pgTable(
  "weighing_proposals",
  {
    id: serial("id").primaryKey(),
    sessionId: integer("session_id").notNull().references(() => weighingSessions.id, { onDelete: "cascade" }),
    userId: integer("user_id").notNull().references(() => users.id, { onDelete: "cascade" }),
    content: jsonb("content").$type<Record<string, unknown>>().notNull(),
    /** 1 when made, +1 at every edit */
    revision: integer("revision").notNull().default(1),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex("weighing_proposals_member_key").on(t.sessionId, t.userId)],
);

/** A remark in a session's discussion, optionally about one factor. */
export const weighingComments = pgTable(
  "weighing_comments",
  {
    id: serial("id").primaryKey(),
    sessionId: integer("session_id").notNull().references(() => weighingSessions.id, { onDelete: "cascade" }),
    userId: integer("user_id").references(() => users.id, { onDelete: "set null" }),
    /** a factor id (app/scoring/factors.ts), or null for the session as a whole */
    factor: text("factor"),
    body: text("body").notNull(),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("weighing_comments_session_idx").on(t.sessionId, t.createdAt)],
);

/**
 * The session's events, numbered 1, 2, 3 … per session. The live stream sends them with their
 * number as the SSE id, and a browser that reconnects with Last-Event-ID n receives exactly the
 * events after n. NOTIFY carries only the session id and number; the data is read from here.
 */
export const weighingEvents = pgTable(
  "weighing_events",
  {
    sessionId: integer("session_id").notNull().references(() => weighingSessions.id, { onDelete: "cascade" }),
    seq: bigint("seq", { mode: "number" }).notNull(),
    kind: text("kind").notNull(),
    userId: integer("user_id").references(() => users.id, { onDelete: "set null" }),
    data: jsonb("data").$type<Record<string, unknown>>().notNull(),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.sessionId, t.seq] })],
);

/**
 * Open live connections (one row per browser stream, in any app process), for presence: a member is
 * present while one of their rows has been seen within the last minute. Each stream refreshes its
 * row at every keep-alive and deletes it when it ends; a crashed process's rows simply go stale.
 */
export const weighingPresence = pgTable(
  "weighing_presence",
  {
    connectionId: text("connection_id").primaryKey(),
    sessionId: integer("session_id").notNull().references(() => weighingSessions.id, { onDelete: "cascade" }),
    userId: integer("user_id").notNull().references(() => users.id, { onDelete: "cascade" }),
    openedAt: timestamp("opened_at", { withTimezone: true }).notNull().defaultNow(),
    lastSeenAt: timestamp("last_seen_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("weighing_presence_session_idx").on(t.sessionId, t.userId)],
);
