// The database schema (Drizzle). One file while it is small; split per area when it grows.
// Migrations are generated from this file into drizzle/ with `npm run db:generate` and committed.
import { sql } from "drizzle-orm";
import {
  bigint,
  bigserial,
  doublePrecision,
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
  uuid,
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
    /** Known sites are shown to viewers snapped to the centres of cells this size (design §9). */
    siteGeneralisationM: integer("site_generalisation_m").notNull().default(1000),
    /** Generalised cells holding fewer known sites than this are not shown (small-count suppression). */
    siteMinCount: integer("site_min_count").notNull().default(3),
    /**
     * The one project classification of potential (issue 10), used by gain, block figures,
     * sensitivity and targets alike: app/scoring/classification.ts `ProjectClassification` —
     * thresholds strictly decreasing, labels highest class first.
     */
    classification: jsonb("classification")
      .$type<Record<string, unknown>>()
      .notNull()
      .default(sql`'{"kind":"fixed","thresholds":[0.75,0.5,0.25],"labels":["very high","high","medium","low"]}'::jsonb`),
    /** When the lead last revealed the hold-out sites to the team (null: hidden). Audit-logged. */
    holdoutRevealedAt: timestamp("holdout_revealed_at", { withTimezone: true }),
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
    /**
     * The community this member speaks for as custodian (design §9, CARE principles): they control
     * the visibility of the records that community contributed. Null for everyone else.
     */
    custodianFor: text("custodian_for"),
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

/** One uploaded piece of evidence (design §2), validated and stored. */
export const datasets = pgTable(
  "datasets",
  {
    id: serial("id").primaryKey(),
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    kind: text("kind").notNull(),
    name: text("name").notNull(),
    format: text("format").notNull(),
    /** The file as uploaded (storage key made by the server) and its SHA-256. */
    originalKey: text("original_key").notNull(),
    originalName: text("original_name").notNull(),
    sizeBytes: bigint("size_bytes", { mode: "number" }).notNull(),
    sha256: text("sha256").notNull(),
    /** The normalised form the engine reads: a Float32 GeoTIFF (grids) or JSON (vectors, tables). */
    derivedKey: text("derived_key").notNull(),
    derivedFormat: text("derived_format").notNull(),
    crsEpsg: integer("crs_epsg").notNull(),
    /** Vertical declaration (sign, datum, offset to present MSL), where the kind has heights. */
    vertical: jsonb("vertical").$type<Record<string, unknown> | null>(),
    extent: doublePrecision("extent").array(),
    count: integer("count").notNull(),
    summary: jsonb("summary").$type<Record<string, unknown>>().notNull().default({}),
    warnings: text("warnings").array().notNull().default(sql`'{}'::text[]`),
    uploadedBy: integer("uploaded_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
  },
  (t) => [index("datasets_project_idx").on(t.projectId, t.kind)],
);

export const siteVisibility = pgEnum("site_visibility", ["normal", "restricted", "withheld"]);

/**
 * Known sites (design §2, §9): exact positions are confidential. Who sees what is decided in
 * app/sites.server.ts only.
 */
export const siteRecords = pgTable(
  "site_records",
  {
    id: serial("id").primaryKey(),
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    datasetId: integer("dataset_id").notNull().references(() => datasets.id, { onDelete: "cascade" }),
    rowNumber: integer("row_number").notNull(),
    label: text("label").notNull().default(""),
    x: doublePrecision("x").notNull(),
    y: doublePrecision("y").notNull(),
    precisionM: doublePrecision("precision_m"),
    siteKind: text("site_kind").notNull().default(""),
    /** in_situ, derived, trawled or dredged: only in-situ sites are ever scored. */
    context: text("context").notNull(),
    discoveryMethod: text("discovery_method").notNull().default(""),
    calBpFrom: doublePrecision("cal_bp_from"),
    calBpTo: doublePrecision("cal_bp_to"),
    confidence: text("confidence").notNull().default(""),
    /** The community that contributed the record, whose custodian controls its visibility. */
    community: text("community"),
    visibility: siteVisibility("visibility").notNull().default("normal"),
    /** In the hold-out set chosen by a lead: hidden from validation while weights are tuned (issue 10). */
    heldOut: boolean("held_out").notNull().default(false),
    attributes: jsonb("attributes").$type<Record<string, unknown>>().notNull().default({}),
  },
  (t) => [index("site_records_project_idx").on(t.projectId)],
);

export const jobState = pgEnum("job_state", ["queued", "running", "succeeded", "failed", "cancelled"]);

/**
 * One long task as people see it (a reconstruction, later scoring, training, sensitivity): its
 * progress, heartbeat and outcome. The queue itself is pg-boss's (schema "pgboss"); this row is
 * ours, written by the job wrapper in jobs/.
 */
export const jobRuns = pgTable(
  "job_runs",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    projectId: integer("project_id").references(() => projects.id, { onDelete: "cascade" }),
    kind: text("kind").notNull(),
    state: jobState("state").notNull().default("queued"),
    step: text("step").notNull().default(""),
    fraction: doublePrecision("fraction").notNull().default(0),
    message: text("message").notNull().default(""),
    payload: jsonb("payload").$type<Record<string, unknown>>().notNull().default({}),
    result: jsonb("result").$type<Record<string, unknown> | null>(),
    /** The pg-boss job id of the current attempt. */
    queueJobId: text("queue_job_id"),
    attempt: integer("attempt").notNull().default(0),
    heartbeatAt: timestamp("heartbeat_at", { withTimezone: true }),
    cancelRequested: boolean("cancel_requested").notNull().default(false),
    startedBy: integer("started_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    startedAt: timestamp("started_at", { withTimezone: true }),
    finishedAt: timestamp("finished_at", { withTimezone: true }),
  },
  (t) => [index("job_runs_project_idx").on(t.projectId, t.createdAt), index("job_runs_running_idx").on(t.state, t.heartbeatAt)],
);

export const reconstructionStatus = pgEnum("reconstruction_status", ["running", "published", "failed", "cancelled"]);

/**
 * A reconstruction (design §3): one analysis surface, one sea-level model, a list of ages. The
 * manifest appears only when the attempt that owns the run publishes it, in one transaction.
 * Identical inputs (content hashes, parameters, engine version) map to one row.
 */
export const reconstructions = pgTable(
  "reconstructions",
  {
    id: serial("id").primaryKey(),
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    name: text("name").notNull().default(""),
    inputsHash: text("inputs_hash").notNull(),
    params: jsonb("params").$type<Record<string, unknown>>().notNull(),
    engineVersion: text("engine_version").notNull(),
    status: reconstructionStatus("status").notNull().default("running"),
    jobRunId: uuid("job_run_id").references(() => jobRuns.id, { onDelete: "set null" }),
    /** Storage prefix of the attempt whose layers were published. */
    layerPrefix: text("layer_prefix"),
    manifest: jsonb("manifest").$type<Record<string, unknown> | null>(),
    error: text("error"),
    createdBy: integer("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    publishedAt: timestamp("published_at", { withTimezone: true }),
  },
  (t) => [uniqueIndex("reconstructions_inputs_key").on(t.projectId, t.inputsHash)],
);

/** A project's own relative sea-level curve (the shipped global curve lives in app/terrain). */
export const seaLevelCurves = pgTable("sea_level_curves", {
  id: serial("id").primaryKey(),
  projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
  name: text("name").notNull(),
  /** Where it came from: "copy of the shipped global curve", "imported CSV", … */
  source: text("source").notNull().default(""),
  /** [{ ageKa, rslM, sigmaM }] (σ null where none is given), ages strictly increasing. */
  points: jsonb("points").$type<Array<{ ageKa: number; rslM: number; sigmaM: number | null }>>().notNull(),
  createdBy: integer("created_by").references(() => users.id, { onDelete: "set null" }),
  createdAt: createdAt(),
  updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
});

/**
 * A project's weight set (design §4): a name and a line of versions. The content lives in the
 * versions; every save adds one, so history, restore and comparison read them.
 */
export const weightSets = pgTable(
  "weight_sets",
  {
    id: serial("id").primaryKey(),
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    description: text("description").notNull().default(""),
    /** The newest version number; a PATCH must carry it (a stale save is refused with 409). */
    currentVersion: integer("current_version").notNull().default(1),
    /** The version this set was forked from, if any. */
    forkedFromVersionId: integer("forked_from_version_id"),
    createdBy: integer("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("weight_sets_project_idx").on(t.projectId)],
);

/** One saved state of a weight set: its content (app/scoring/weight-set.ts), who, when and why. */
export const weightSetVersions = pgTable(
  "weight_set_versions",
  {
    id: serial("id").primaryKey(),
    weightSetId: integer("weight_set_id").notNull().references(() => weightSets.id, { onDelete: "cascade" }),
    version: integer("version").notNull(),
    content: jsonb("content").$type<Record<string, unknown>>().notNull(),
    /** SHA-256 of the canonical JSON of the content (what scorings and reviews refer to). */
    contentHash: text("content_hash").notNull(),
    /** Why this version was saved (or "restored from version n"). */
    note: text("note").notNull().default(""),
    createdBy: integer("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("weight_set_versions_key").on(t.weightSetId, t.version)],
);

/** Each time a lead adopts a weight-set version for the project; the newest row is the adopted one. */
export const weightSetAdoptions = pgTable(
  "weight_set_adoptions",
  {
    id: serial("id").primaryKey(),
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    versionId: integer("version_id").notNull().references(() => weightSetVersions.id, { onDelete: "no action" }),
    rationale: text("rationale").notNull().default(""),
    adoptedBy: integer("adopted_by").references(() => users.id, { onDelete: "set null" }),
    adoptedAt: timestamp("adopted_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("weight_set_adoptions_project_idx").on(t.projectId, t.adoptedAt)],
);

export const scoringStatus = pgEnum("scoring_status", ["running", "published", "failed", "cancelled"]);

/**
 * A scoring (design §4): a weight-set version applied to a reconstruction at full resolution, for
 * one age or one period of the version, by the scoring job. Identical inputs map to one row.
 */
export const scorings = pgTable(
  "scorings",
  {
    id: serial("id").primaryKey(),
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    reconstructionId: integer("reconstruction_id").notNull().references(() => reconstructions.id, { onDelete: "no action" }),
    weightSetVersionId: integer("weight_set_version_id").notNull().references(() => weightSetVersions.id, { onDelete: "no action" }),
    /** { kind: "age", ageKa } or { kind: "period", name, youngKa, oldKa, rule } */
    target: jsonb("target").$type<Record<string, unknown>>().notNull(),
    inputsHash: text("inputs_hash").notNull(),
    status: scoringStatus("status").notNull().default("running"),
    jobRunId: uuid("job_run_id").references(() => jobRuns.id, { onDelete: "set null" }),
    /** Storage prefix of the published files (potential GeoTIFF, occupation, preservation, statistics). */
    layerPrefix: text("layer_prefix"),
    /** Statistics, file list and checksums written when the job publishes. */
    result: jsonb("result").$type<Record<string, unknown> | null>(),
    error: text("error"),
    createdBy: integer("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    publishedAt: timestamp("published_at", { withTimezone: true }),
  },
  (t) => [uniqueIndex("scorings_inputs_key").on(t.projectId, t.inputsHash), index("scorings_project_idx").on(t.projectId, t.createdAt)],
);

export const modelStatus = pgEnum("model_status", ["running", "published", "failed", "cancelled"]);

/**
 * A trained model (design §4, issue 10): a random forest on factor values of one reconstruction,
 * with spatial-block cross-validation, its model card and a probability raster. Model rasters peak
 * on exact site positions: never shown below analyst (capability models.read).
 */
export const models = pgTable(
  "models",
  {
    id: serial("id").primaryKey(),
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    reconstructionId: integer("reconstruction_id").notNull().references(() => reconstructions.id, { onDelete: "no action" }),
    name: text("name").notNull().default(""),
    /** factors, ages or period, caps (samples, trees), block size, folds, seed, minimum sites */
    params: jsonb("params").$type<Record<string, unknown>>().notNull(),
    inputsHash: text("inputs_hash").notNull(),
    status: modelStatus("status").notNull().default("running"),
    jobRunId: uuid("job_run_id").references(() => jobRuns.id, { onDelete: "set null" }),
    layerPrefix: text("layer_prefix"),
    /** the model card: inputs, sample counts, parameters, fold metrics, training time */
    card: jsonb("card").$type<Record<string, unknown> | null>(),
    result: jsonb("result").$type<Record<string, unknown> | null>(),
    error: text("error"),
    createdBy: integer("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    publishedAt: timestamp("published_at", { withTimezone: true }),
  },
  (t) => [uniqueIndex("models_inputs_key").on(t.projectId, t.inputsHash), index("models_project_idx").on(t.projectId, t.createdAt)],
);

/**
 * A validation (design §5): a scoring or a model against the project's sites and cores under one
 * classification, stored so two can be compared on the same sites. Keyed by what went in.
 */
export const validations = pgTable(
  "validations",
  {
    id: serial("id").primaryKey(),
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    /** "scoring" or "model" */
    subjectKind: text("subject_kind").notNull(),
    subjectId: integer("subject_id").notNull(),
    /** SHA-256 over the classification, the evidence used (ids and positions) and the hold-out state */
    inputsHash: text("inputs_hash").notNull(),
    result: jsonb("result").$type<Record<string, unknown>>().notNull(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("validations_key").on(t.projectId, t.subjectKind, t.subjectId, t.inputsHash)],
);

export const uncertaintyStatus = pgEnum("uncertainty_status", ["running", "published", "failed", "cancelled"]);

/**
 * An uncertainty run (design §7, issue 12): Monte Carlo over the weights and the landscape's own
 * parameters for one weight-set version on one age or period; seeded and repeatable.
 */
export const uncertaintyRuns = pgTable(
  "uncertainty_runs",
  {
    id: serial("id").primaryKey(),
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    reconstructionId: integer("reconstruction_id").notNull().references(() => reconstructions.id, { onDelete: "no action" }),
    weightSetVersionId: integer("weight_set_version_id").notNull().references(() => weightSetVersions.id, { onDelete: "no action" }),
    target: jsonb("target").$type<Record<string, unknown>>().notNull(),
    /** draws, seed, weight perturbation, which landscape parameters vary and by how much */
    params: jsonb("params").$type<Record<string, unknown>>().notNull(),
    inputsHash: text("inputs_hash").notNull(),
    status: uncertaintyStatus("status").notNull().default("running"),
    jobRunId: uuid("job_run_id").references(() => jobRuns.id, { onDelete: "set null" }),
    layerPrefix: text("layer_prefix"),
    result: jsonb("result").$type<Record<string, unknown> | null>(),
    error: text("error"),
    createdBy: integer("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    publishedAt: timestamp("published_at", { withTimezone: true }),
  },
  (t) => [uniqueIndex("uncertainty_inputs_key").on(t.projectId, t.inputsHash)],
);

export const reviewStatus = pgEnum("review_status", ["open", "decided"]);
export const reviewDecision = pgEnum("review_decision", ["accepted", "accepted_with_conditions", "changes_requested"]);

/**
 * A regulator's review (design §7, issue 12) on a snapshot frozen by a content hash: the
 * reconstruction, weight-set version or model, classification, uncertainty run and the checksums of
 * their files. Everything a review refers to becomes undeletable. The decision is signed by the
 * reviewer re-entering their password and stored with name, time and the snapshot hash.
 */
export const reviews = pgTable(
  "reviews",
  {
    id: serial("id").primaryKey(),
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    title: text("title").notNull(),
    /** what was frozen: ids, versions, hashes and file checksums */
    snapshot: jsonb("snapshot").$type<Record<string, unknown>>().notNull(),
    snapshotHash: text("snapshot_hash").notNull(),
    status: reviewStatus("status").notNull().default("open"),
    decision: reviewDecision("decision"),
    conditions: text("conditions").array().notNull().default(sql`'{}'::text[]`),
    decisionNote: text("decision_note").notNull().default(""),
    signedBy: integer("signed_by").references(() => users.id, { onDelete: "set null" }),
    /** the signer's name as it was at signing */
    signedName: text("signed_name"),
    signedAt: timestamp("signed_at", { withTimezone: true }),
    createdBy: integer("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
  },
  (t) => [index("reviews_project_idx").on(t.projectId, t.createdAt)],
);

/** Threaded comments on a review (reviewer, lead, analyst). */
export const reviewComments = pgTable(
  "review_comments",
  {
    id: serial("id").primaryKey(),
    reviewId: integer("review_id").notNull().references(() => reviews.id, { onDelete: "cascade" }),
    parentId: integer("parent_id"),
    userId: integer("user_id").references(() => users.id, { onDelete: "set null" }),
    body: text("body").notNull(),
    createdAt: createdAt(),
  },
  (t) => [index("review_comments_review_idx").on(t.reviewId, t.createdAt)],
);

/** Exclusion buffers a reviewer sets per feature kind (issue 12), per project. */
export const exclusionSettings = pgTable("exclusion_settings", {
  projectId: integer("project_id").primaryKey().references(() => projects.id, { onDelete: "cascade" }),
  /** { wreck: 100, anomaly: 50, find_spot: 50, ... } in metres, added to extent + position uncertainty */
  buffersM: jsonb("buffers_m").$type<Record<string, number>>().notNull(),
  updatedBy: integer("updated_by").references(() => users.id, { onDelete: "set null" }),
  updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
});

export const targetListStatus = pgEnum("target_list_status", ["draft", "published"]);
export const targetStatus = pgEnum("target_status", ["planned", "cored", "result"]);

/**
 * A list of core targets (design §6, issue 11): made from a scoring or a model under constraints
 * and selection modes, ordered into a cruise plan; publishing (a lead) freezes it — the targets
 * then only move planned → cored → result.
 */
export const targetLists = pgTable(
  "target_lists",
  {
    id: serial("id").primaryKey(),
    projectId: integer("project_id").notNull().references(() => projects.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    /** what the targets were ranked on: { kind: "scoring" | "model", id } */
    source: jsonb("source").$type<Record<string, unknown>>().notNull(),
    /** constraints, selection modes, cruise settings */
    params: jsonb("params").$type<Record<string, unknown>>().notNull(),
    /** the cruise plan: order, legs, times, cores that fit the ship days */
    plan: jsonb("plan").$type<Record<string, unknown> | null>(),
    status: targetListStatus("status").notNull().default("draft"),
    /** SHA-256 of the canonical JSON of the targets and plan when published */
    publishedHash: text("published_hash"),
    publishedBy: integer("published_by").references(() => users.id, { onDelete: "set null" }),
    publishedAt: timestamp("published_at", { withTimezone: true }),
    createdBy: integer("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
  },
  (t) => [index("target_lists_project_idx").on(t.projectId, t.createdAt)],
);

/** One core target of a list: where, why, and what happened when it was cored. */
export const targets = pgTable(
  "targets",
  {
    id: serial("id").primaryKey(),
    listId: integer("list_id").notNull().references(() => targetLists.id, { onDelete: "cascade" }),
    rank: integer("rank").notNull(),
    waypoint: text("waypoint").notNull(),
    /** project CRS, m */
    x: doublePrecision("x").notNull(),
    y: doublePrecision("y").notNull(),
    lon: doublePrecision("lon").notNull(),
    lat: doublePrecision("lat").notNull(),
    /** selection mode (best, transect, control, learn), depths, TWT, nearest line, penetration, exclusions nearby, ages land, score, contributions */
    detail: jsonb("detail").$type<Record<string, unknown>>().notNull(),
    status: targetStatus("status").notNull().default("planned"),
    /** the core record of design §2 once cored, and the result (archaeological material, horizon reached, preserved surface) */
    core: jsonb("core").$type<Record<string, unknown> | null>(),
    updatedBy: integer("updated_by").references(() => users.id, { onDelete: "set null" }),
    updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex("targets_list_rank_key").on(t.listId, t.rank)],
);
