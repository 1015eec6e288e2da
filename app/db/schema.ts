// The database schema (Drizzle). One file while it is small; split per area when it grows.
// Migrations are generated from this file into drizzle/ with `npm run db:generate` and committed.
import { sql } from "drizzle-orm";
import {
  bigserial,
  boolean,
  index,
  integer,
  jsonb,
  pgEnum,
  pgTable,
  primaryKey,
  serial,
  text,
  timestamp,
  uniqueIndex,
} from "drizzle-orm/pg-core";

const createdAt = () => timestamp("created_at", { withTimezone: true }).notNull().defaultNow();

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
    createdBy: integer("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("projects_slug_key").on(t.slug)],
);

/** A person who can sign in. There is no open sign-up: users come from the seed, a script or an invitation. */
export const users = pgTable(
  "users",
  {
    id: serial("id").primaryKey(),
    /** Stored lower-cased and trimmed; unique. */
    email: text("email").notNull(),
    name: text("name").notNull(),
    /** argon2id encoded hash. */
    passwordHash: text("password_hash").notNull(),
    /** May create new projects (see docs/decisions/006-accounts.md). */
    mayCreateProjects: boolean("may_create_projects").notNull().default(false),
    /** Whether job-finished e-mails are wanted (opt-out in account settings). */
    jobEmails: boolean("job_emails").notNull().default(true),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("users_email_key").on(t.email)],
);

/** Server-side sessions: the cookie carries a random id, the table its SHA-256. */
export const sessions = pgTable(
  "sessions",
  {
    idHash: text("id_hash").primaryKey(),
    userId: integer("user_id").notNull().references(() => users.id, { onDelete: "cascade" }),
    createdAt: createdAt(),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    lastSeenAt: timestamp("last_seen_at", { withTimezone: true }).notNull().defaultNow(),
    revokedAt: timestamp("revoked_at", { withTimezone: true }),
    clientAddress: text("client_address").notNull().default(""),
    userAgent: text("user_agent").notNull().default(""),
  },
  (t) => [index("sessions_user_idx").on(t.userId)],
);

export const projectRole = pgEnum("project_role", ["owner", "lead", "analyst", "reviewer", "viewer"]);

/** A user's role in a project (design §9). */
export const memberships = pgTable(
  "memberships",
  {
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    userId: integer("user_id").notNull().references(() => users.id, { onDelete: "cascade" }),
    role: projectRole("role").notNull(),
    createdAt: createdAt(),
  },
  (t) => [primaryKey({ columns: [t.projectId, t.userId] }), index("memberships_user_idx").on(t.userId)],
);

/** Single-use, expiring invitation to join a project; the token is stored hashed. */
export const invitations = pgTable(
  "invitations",
  {
    id: serial("id").primaryKey(),
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    email: text("email").notNull(),
    role: projectRole("role").notNull(),
    tokenHash: text("token_hash").notNull(),
    invitedBy: integer("invited_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    acceptedAt: timestamp("accepted_at", { withTimezone: true }),
    acceptedBy: integer("accepted_by").references(() => users.id, { onDelete: "set null" }),
    revokedAt: timestamp("revoked_at", { withTimezone: true }),
  },
  (t) => [uniqueIndex("invitations_token_key").on(t.tokenHash), index("invitations_project_idx").on(t.projectId)],
);

/** Single-use, expiring password-reset token, stored hashed. */
export const passwordResets = pgTable(
  "password_resets",
  {
    id: serial("id").primaryKey(),
    userId: integer("user_id").notNull().references(() => users.id, { onDelete: "cascade" }),
    tokenHash: text("token_hash").notNull(),
    createdAt: createdAt(),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    usedAt: timestamp("used_at", { withTimezone: true }),
  },
  (t) => [uniqueIndex("password_resets_token_key").on(t.tokenHash)],
);

/** Personal API tokens: shown once, stored as a hash, revocable. */
export const apiTokens = pgTable(
  "api_tokens",
  {
    id: serial("id").primaryKey(),
    userId: integer("user_id").notNull().references(() => users.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    /** The visible start of the token (e.g. "lst_3fa9c2"), to recognise it in lists and logs. */
    prefix: text("prefix").notNull(),
    tokenHash: text("token_hash").notNull(),
    createdAt: createdAt(),
    lastUsedAt: timestamp("last_used_at", { withTimezone: true }),
    revokedAt: timestamp("revoked_at", { withTimezone: true }),
  },
  (t) => [uniqueIndex("api_tokens_hash_key").on(t.tokenHash), index("api_tokens_user_idx").on(t.userId)],
);

/** Sign-in attempts, for throttling shared by every app process. */
export const loginAttempts = pgTable(
  "login_attempts",
  {
    id: bigserial("id", { mode: "number" }).primaryKey(),
    /** The e-mail as typed, normalised, whether or not an account has it. */
    emailKey: text("email_key").notNull(),
    clientAddress: text("client_address").notNull(),
    succeeded: boolean("succeeded").notNull(),
    at: timestamp("at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("login_attempts_email_idx").on(t.emailKey, t.at), index("login_attempts_addr_idx").on(t.clientAddress, t.at)],
);

/** Outgoing e-mail, queued in the same transaction as the change that causes it. */
export const mailOutbox = pgTable(
  "mail_outbox",
  {
    id: bigserial("id", { mode: "number" }).primaryKey(),
    toAddress: text("to_address").notNull(),
    subject: text("subject").notNull(),
    textBody: text("text_body").notNull(),
    htmlBody: text("html_body"),
    createdAt: createdAt(),
    sentAt: timestamp("sent_at", { withTimezone: true }),
    attempts: integer("attempts").notNull().default(0),
    nextAttemptAt: timestamp("next_attempt_at", { withTimezone: true }).notNull().defaultNow(),
    lastError: text("last_error"),
  },
  (t) => [index("mail_outbox_pending_idx").on(t.nextAttemptAt).where(sql`sent_at is null`)],
);

/** Messages received by the local SMTP catcher (development and tests only). */
export const caughtMail = pgTable("caught_mail", {
  id: bigserial("id", { mode: "number" }).primaryKey(),
  envelopeFrom: text("envelope_from").notNull(),
  envelopeTo: text("envelope_to").array().notNull(),
  subject: text("subject").notNull().default(""),
  /** The text/plain part, decoded, for reading links in tests and on the outbox page. */
  textBody: text("text_body").notNull().default(""),
  raw: text("raw").notNull(),
  receivedAt: timestamp("received_at", { withTimezone: true }).notNull().defaultNow(),
});

/** Who did what to which project, when. */
export const auditLog = pgTable(
  "audit_log",
  {
    id: bigserial("id", { mode: "number" }).primaryKey(),
    at: timestamp("at", { withTimezone: true }).notNull().defaultNow(),
    actorUserId: integer("actor_user_id").references(() => users.id, { onDelete: "set null" }),
    projectId: integer("project_id").references(() => projects.id, { onDelete: "cascade" }),
    action: text("action").notNull(),
    detail: jsonb("detail").$type<Record<string, unknown>>().notNull().default({}),
    clientAddress: text("client_address").notNull().default(""),
  },
  (t) => [index("audit_project_idx").on(t.projectId, t.at)],
);
