// The authorization matrix: every route in app/routes.ts × every kind of caller → allowed or
// refused. Data-driven from the route list: a route without a row here fails the test.
// "Refused" means an access refusal (401/403/404 marked X-Lowstand-Refusal) or a redirect to
// sign-in; anything else (200, 302 elsewhere, 400/405/409/410/422 about the input) is "allowed".
// Probes that change state send bodies that are refused for their content after authorization,
// so one world serves the whole matrix.
import { beforeAll, describe, expect, it } from "vitest";
import routes from "./routes";
import { db } from "./db.server";
import { defaultWeightSetContent } from "./scoring/weight-set";
import { datasets, jobRuns, reviews, models, reconstructions, scorings, uncertaintyRuns, weightSets, weightSetVersions, targetLists, targets } from "./db/schema";
import { eq } from "drizzle-orm";
import { createWeightSet } from "./weight-sets.server";
import { buildWorld, call, cookieFor, EVERYONE, headersFor, isRefusal, type CallOptions, type Who, type World } from "../tests/support/world";
import { closeSession, getSession, startSession } from "./weighing-sessions.server";

type Verdict = "allow" | "refuse";
type Expect = Partial<Record<Who, Verdict>> & { default: Verdict };
interface Probe {
  method: "GET" | "POST" | "PUT" | "PATCH" | "DELETE";
  path: (w: World) => string;
  params?: (w: World) => Record<string, string>;
  /** Params made fresh for each caller (for probes that delete what they are sent to). */
  freshParams?: (w: World) => Promise<Record<string, string>>;
  options?: Omit<CallOptions, "method" | "headers" | "params">;
  /** Use a new session per caller (for probes that end the session they are sent with). */
  freshSessions?: boolean;
  expect: Expect;
}

const allowAll: Expect = { default: "allow" };
const signedInPages: Expect = { default: "allow", signedOut: "refuse", viewerToken: "refuse" };
const signedInApi: Expect = { default: "allow", signedOut: "refuse" };
const projectPage = (allowed: Who[]): Expect => ({ default: "refuse", ...Object.fromEntries(allowed.map((w) => [w, "allow"])) });
const MEMBERS: Who[] = ["owner", "lead", "analyst", "reviewer", "viewer"];
const UPLOADERS: Who[] = ["owner", "lead", "analyst"];
const MODEL_READERS: Who[] = ["owner", "lead", "analyst", "reviewer"];
const pid = (w: World) => ({ projectId: String(w.projectId) });

const MATRIX: Record<string, Probe[]> = {
  "routes/home.tsx": [{ method: "GET", path: () => "/", expect: { default: "allow", viewerToken: "refuse" } }],
  "routes/healthz.ts": [{ method: "GET", path: () => "/healthz", expect: allowAll }],
  "routes/login.tsx": [
    { method: "GET", path: () => "/login", expect: { default: "allow", viewerToken: "allow" } },
    { method: "POST", path: () => "/login", options: { form: { email: "", password: "" } }, expect: allowAll },
  ],
  "routes/logout.ts": [
    { method: "GET", path: () => "/logout", expect: allowAll },
    { method: "POST", path: () => "/logout", freshSessions: true, expect: { default: "allow", viewerToken: "refuse" } },
  ],
  "routes/forgot-password.tsx": [{ method: "POST", path: () => "/forgot-password", options: { form: { email: "not-an-address" } }, expect: allowAll }],
  "routes/reset-password.tsx": [
    { method: "GET", path: () => "/reset-password/no-such-token", params: () => ({ token: "no-such-token" }), expect: allowAll },
    { method: "POST", path: () => "/reset-password/no-such-token", params: () => ({ token: "no-such-token" }), options: { form: { password: "x" } }, expect: allowAll },
  ],
  "routes/invitation.tsx": [
    { method: "GET", path: () => "/invitations/no-such-token", params: () => ({ token: "no-such-token" }), expect: { default: "allow", viewerToken: "allow" } },
    { method: "POST", path: () => "/invitations/no-such-token", params: () => ({ token: "no-such-token" }), options: { form: { name: "", password: "" } }, expect: { default: "allow", viewerToken: "refuse" } },
  ],
  "routes/account.tsx": [
    { method: "GET", path: () => "/account", expect: signedInPages },
    { method: "POST", path: () => "/account", options: { form: { intent: "nothing" } }, expect: signedInPages },
  ],
  "routes/project-new.tsx": [
    { method: "GET", path: () => "/projects/new", expect: projectPage(["owner", "lead"]) },
    { method: "POST", path: () => "/projects/new", options: { form: { name: "" } }, expect: projectPage(["owner", "lead"]) },
  ],
  "routes/project-layout.tsx": [{ method: "GET", path: (w) => `/projects/${w.projectId}`, params: pid, expect: projectPage(MEMBERS) }],
  "routes/project-overview.tsx": [{ method: "GET", path: (w) => `/projects/${w.projectId}`, params: pid, expect: projectPage(MEMBERS) }],
  "routes/project-members.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/members`, params: pid, expect: projectPage(MEMBERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/members`, params: pid, options: { form: { intent: "nothing" } }, expect: projectPage(["owner", "lead"]) },
  ],
  "routes/project-audit.tsx": [{ method: "GET", path: (w) => `/projects/${w.projectId}/audit`, params: pid, expect: projectPage(["owner", "lead", "reviewer"]) }],
  // Development only, and only to a browser on this machine (where a signed-out person must be
  // able to read their own reset link); checked below from another address and in production.
  "routes/dev-outbox.tsx": [{ method: "GET", path: () => "/dev/outbox", expect: allowAll }],
  "routes/api.me.ts": [
    { method: "GET", path: () => "/api/me", expect: signedInApi },
    { method: "POST", path: () => "/api/me", expect: signedInApi },
  ],
  "routes/api.projects.ts": [
    { method: "GET", path: () => "/api/projects", expect: signedInApi },
    { method: "POST", path: () => "/api/projects", options: { json: {} }, expect: projectPage(["owner", "lead"]) },
  ],
  "routes/api.project.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}`, params: pid, options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.project-members.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/members`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/members`, params: pid, options: { json: { email: "bad" } }, expect: projectPage(["owner", "lead"]) },
  ],
  "routes/api.project-member.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/members/1`, params: (w) => ({ ...pid(w), userId: "1" }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "PATCH", path: (w) => `/api/projects/${w.projectId}/members/999999`, params: (w) => ({ ...pid(w), userId: "999999" }), options: { json: { role: "viewer" } }, expect: projectPage(["owner", "lead"]) },
    { method: "DELETE", path: (w) => `/api/projects/${w.projectId}/members/999999`, params: (w) => ({ ...pid(w), userId: "999999" }), expect: projectPage(["owner", "lead"]) },
  ],
  "routes/project-settings.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/settings`, params: pid, expect: projectPage(["owner", "lead"]) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/settings`, params: pid, options: { form: { name: "" } }, expect: projectPage(["owner", "lead"]) },
  ],
  "routes/project-datasets.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/data`, params: pid, expect: projectPage(MEMBERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/data`, params: pid, options: { form: { kind: "bathymetry" } }, expect: projectPage(UPLOADERS) },
  ],
  "routes/project-dataset.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/data/x`, params: (w) => ({ ...pid(w), datasetId: String(datasetId) }), expect: projectPage(MEMBERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/data/x`, params: (w) => ({ ...pid(w), datasetId: String(datasetId) }), options: { form: { intent: "nothing" } }, expect: projectPage(UPLOADERS) },
  ],
  "routes/project-sites.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/sites`, params: pid, expect: projectPage(MEMBERS) },
    // Any member reaches the action; only a custodian of the record's community may change it (tested in datasets.int.test.ts).
    { method: "POST", path: (w) => `/projects/${w.projectId}/sites`, params: pid, options: { form: { siteId: "x" } }, expect: projectPage(MEMBERS) },
  ],
  "routes/api.project-datasets.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/datasets`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/datasets`, params: pid, options: { json: {} }, expect: projectPage(UPLOADERS) },
  ],
  "routes/api.dataset.ts": [
    { method: "GET", path: () => `/api/datasets/x`, params: () => ({ datasetId: String(datasetId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "DELETE", path: () => `/api/datasets/x`, freshParams: async (w) => ({ datasetId: String(await makeDataset(w)) }), expect: projectPage(UPLOADERS) },
  ],
  "routes/api.project-sites.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/sites`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/project-reconstructions.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/reconstructions`, params: pid, expect: projectPage(MEMBERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/reconstructions`, params: pid, options: { form: { ages: "" } }, expect: projectPage(UPLOADERS) },
  ],
  "routes/project-reconstruction.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/reconstructions/x`, params: (w) => ({ ...pid(w), reconstructionId: String(reconstructionId) }), expect: projectPage(MEMBERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/reconstructions/x`, params: (w) => ({ ...pid(w), reconstructionId: String(reconstructionId) }), options: { form: { intent: "nothing" } }, expect: projectPage(UPLOADERS) },
  ],
  "routes/project-job.tsx": [{ method: "GET", path: (w) => `/projects/${w.projectId}/jobs/x`, params: (w) => ({ ...pid(w), jobId }), expect: projectPage(MEMBERS) }],
  "routes/project-sea-level.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/sea-level`, params: pid, expect: projectPage(MEMBERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/sea-level`, params: pid, options: { form: { intent: "nothing" } }, expect: projectPage(UPLOADERS) },
  ],
  "routes/project-map.tsx": [{ method: "GET", path: (w) => `/projects/${w.projectId}/map`, params: pid, expect: projectPage(MEMBERS) }],
  "routes/project-sessions.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/weighing`, params: pid, expect: projectPage(MEMBERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/weighing`, params: pid, options: { form: { title: "" } }, expect: projectPage(["owner", "lead"]) },
  ],
  "routes/project-session.tsx": [{ method: "GET", path: (w) => `/projects/${w.projectId}/weighing/x`, params: (w) => ({ ...pid(w), sessionId: String(openSessionId) }), expect: projectPage(MEMBERS) }],
  // Probed on a closed session the caller lacks nothing of: allowed callers get 204 (no stream to close).
  "routes/live.session-events.ts": [{ method: "GET", path: () => `/live/weighing/x?after=999`, params: () => ({ sessionId: String(closedSessionId) }), expect: projectPage(MEMBERS) }],
  "routes/api.project-sessions.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/weighing-sessions`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/weighing-sessions`, params: pid, options: { json: {} }, expect: projectPage(["owner", "lead"]) },
  ],
  "routes/api.session.ts": [
    { method: "GET", path: () => `/api/weighing-sessions/x`, params: () => ({ sessionId: String(openSessionId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/weighing-sessions/x`, params: () => ({ sessionId: String(openSessionId) }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.session-events.ts": [{ method: "GET", path: () => `/api/weighing-sessions/x/events?after=0`, params: () => ({ sessionId: String(openSessionId) }), expect: projectPage([...MEMBERS, "viewerToken"]) }],
  "routes/api.session-proposal.ts": [
    { method: "GET", path: () => `/api/weighing-sessions/x/proposal`, params: () => ({ sessionId: String(openSessionId) }), expect: projectPage(UPLOADERS) },
    { method: "POST", path: () => `/api/weighing-sessions/x/proposal`, params: () => ({ sessionId: String(openSessionId) }), options: { json: {} }, expect: projectPage(UPLOADERS) },
  ],
  "routes/api.session-comments.ts": [
    { method: "POST", path: () => `/api/weighing-sessions/x/comments`, params: () => ({ sessionId: String(openSessionId) }), options: { json: {} }, expect: projectPage(["owner", "lead", "analyst", "reviewer"]) },
  ],
  // Probed on a closed session: allowed callers get 409 (already closed).
  "routes/api.session-close.ts": [{ method: "POST", path: () => `/api/weighing-sessions/x/close`, params: () => ({ sessionId: String(closedSessionId) }), options: { json: {} }, expect: projectPage(["owner", "lead"]) }],
  "routes/api.session-outcome.ts": [
    { method: "POST", path: () => `/api/weighing-sessions/x/outcome`, params: () => ({ sessionId: String(openSessionId) }), options: { json: {} }, expect: projectPage(["owner", "lead"]) },
  ],
  "routes/project-weight-sets.tsx": [{ method: "GET", path: (w) => `/projects/${w.projectId}/weights`, params: pid, expect: projectPage(MEMBERS) }],
  "routes/project-weight-set.tsx": [{ method: "GET", path: (w) => `/projects/${w.projectId}/weights/x`, params: (w) => ({ ...pid(w), weightSetId: String(weightSetId) }), expect: projectPage(MEMBERS) }],
  "routes/api.project-reconstructions.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/reconstructions`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/reconstructions`, params: pid, options: { json: {} }, expect: projectPage(UPLOADERS) },
  ],
  "routes/api.reconstruction.ts": [
    { method: "GET", path: () => `/api/reconstructions/x`, params: () => ({ id: String(reconstructionId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/reconstructions/x`, params: () => ({ id: String(reconstructionId) }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.reconstruction-layer.ts": [
    { method: "GET", path: () => `/api/reconstructions/x/layers/slope_deg`, params: () => ({ id: String(reconstructionId), layer: "slope_deg" }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/reconstructions/x/layers/slope_deg`, params: () => ({ id: String(reconstructionId), layer: "slope_deg" }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.reconstruction-layer-preview.ts": [
    { method: "GET", path: () => `/api/reconstructions/x/layers/slope_deg/preview.png`, params: () => ({ id: String(reconstructionId), layer: "slope_deg" }), expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.project-map.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/map`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/map`, params: pid, options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.reconstruction-vectors.ts": [
    { method: "GET", path: () => `/api/reconstructions/x/vectors/shoreline?age=12`, params: () => ({ id: String(reconstructionId), what: "shoreline" }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/reconstructions/x/vectors/shoreline`, params: () => ({ id: String(reconstructionId), what: "shoreline" }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.reconstruction-section.ts": [
    { method: "GET", path: () => `/api/reconstructions/x/section?from=0,0&to=1,1`, params: () => ({ id: String(reconstructionId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/reconstructions/x/section`, params: () => ({ id: String(reconstructionId) }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.job.ts": [
    { method: "GET", path: () => `/api/jobs/x`, params: () => ({ jobId }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/jobs/x`, params: () => ({ jobId }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.job-cancel.ts": [
    { method: "GET", path: () => `/api/jobs/x/cancel`, params: () => ({ jobId }), expect: projectPage(UPLOADERS) },
    { method: "POST", path: () => `/api/jobs/x/cancel`, params: () => ({ jobId }), options: { json: {} }, expect: projectPage(UPLOADERS) },
  ],
  "routes/api.project-sites-export.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/sites/export?format=csv`, params: pid, expect: projectPage(["owner", "lead"]) },
  ],
  "routes/api.project-weight-sets.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/weight-sets`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/weight-sets`, params: pid, options: { json: {} }, expect: projectPage(UPLOADERS) },
  ],
  "routes/api.project-adopted-weights.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/weight-sets/adopted`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/weight-sets/adopted`, params: pid, options: { json: {} }, expect: projectPage(["owner", "lead"]) },
  ],
  "routes/api.weight-set.ts": [
    { method: "GET", path: () => `/api/weight-sets/x`, params: () => ({ id: String(weightSetId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "PATCH", path: () => `/api/weight-sets/x`, params: () => ({ id: String(weightSetId) }), options: { json: {} }, expect: projectPage(UPLOADERS) },
    { method: "DELETE", path: () => `/api/weight-sets/x`, freshParams: async (w) => ({ id: String(await makeWeightSet(w)) }), expect: projectPage(UPLOADERS) },
  ],
  "routes/api.weight-set-restore.ts": [
    { method: "POST", path: () => `/api/weight-sets/x/restore`, params: () => ({ id: String(weightSetId) }), options: { json: {} }, expect: projectPage(UPLOADERS) },
  ],
  // The review desk: any member reads (no site positions, or sites as §9 allows); the probe world has
  // no scoring, so members get 409 past the gate. Buffers: reviewers (reviews.sign) or leads and owners (project.edit).
  "routes/project-regulator.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/regulator`, params: pid, expect: projectPage(MEMBERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/regulator`, params: pid, options: { form: { wreck: "-1" } }, expect: projectPage(["owner", "lead", "reviewer"]) },
  ],
  "routes/api.project-conflicts.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/conflicts`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/conflicts`, params: pid, options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.project-block-figures.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/blocks/figures`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/blocks/figures`, params: pid, options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.project-zones.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/zones?kind=exclusion`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/zones`, params: pid, options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.project-desk-map.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/regulator/map.png`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.project-exclusion-settings.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/exclusion-settings`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "PUT", path: (w) => `/api/projects/${w.projectId}/exclusion-settings`, params: pid, options: { json: { wreck: -1 } }, expect: projectPage(["owner", "lead", "reviewer"]) },
  ],
  "routes/api.project-scorings.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/scorings`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/scorings`, params: pid, options: { json: {} }, expect: projectPage(UPLOADERS) },
  ],
  // Uncertainty runs are built on a weight set: every member (and a viewer's token, as for scorings)
  // may read them; only analysts and above start one. The probe run never ran: its raster gives 409.
  "routes/project-uncertainty.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/uncertainty`, params: pid, expect: projectPage(MEMBERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/uncertainty`, params: pid, options: { form: { reconstructionId: "" } }, expect: projectPage([...UPLOADERS, "reviewer"]) },
  ],
  "routes/api.project-uncertainty.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/uncertainty`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/uncertainty`, params: pid, options: { json: {} }, expect: projectPage([...UPLOADERS, "reviewer"]) },
  ],
  "routes/api.uncertainty.ts": [
    { method: "GET", path: () => `/api/uncertainty/x`, params: () => ({ id: String(uncertaintyRunId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/uncertainty/x`, params: () => ({ id: String(uncertaintyRunId) }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.uncertainty-raster.ts": [
    { method: "GET", path: () => `/api/uncertainty/x/raster/p_high`, params: () => ({ id: String(uncertaintyRunId), name: "p_high" }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/uncertainty/x/raster/p_high`, params: () => ({ id: String(uncertaintyRunId), name: "p_high" }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  // Core-target lists (issue 11): every member reads published lists (viewers generalised); analysts
  // and up make lists and record cores; leads and owners publish (project.edit). The probe list is
  // published with one target, so a publish gets 409 and a list edit 409, past the gate.
  "routes/project-targets.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/targets`, params: pid, expect: projectPage(MEMBERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/targets`, params: pid, options: { form: { intent: "create", body: "{}" } }, expect: projectPage(UPLOADERS) },
  ],
  "routes/project-target-list.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/targets/x`, params: (w) => ({ ...pid(w), listId: String(targetListId) }), expect: projectPage(MEMBERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/targets/x`, params: (w) => ({ ...pid(w), listId: String(targetListId) }), options: { form: { intent: "nothing" } }, expect: projectPage(MEMBERS) },
  ],
  "routes/api.project-target-lists.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/target-lists`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/target-lists`, params: pid, options: { json: {} }, expect: projectPage(UPLOADERS) },
  ],
  "routes/api.target-list.ts": [
    { method: "GET", path: () => `/api/target-lists/x`, params: () => ({ id: String(targetListId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "PATCH", path: () => `/api/target-lists/x`, params: () => ({ id: String(targetListId) }), options: { json: {} }, expect: projectPage(UPLOADERS) },
  ],
  "routes/api.target-list-publish.ts": [
    { method: "GET", path: () => `/api/target-lists/x/publish`, params: () => ({ id: String(targetListId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/target-lists/x/publish`, params: () => ({ id: String(targetListId) }), options: { json: {} }, expect: projectPage(["owner", "lead"]) },
  ],
  "routes/api.target-list-export.ts": [
    { method: "GET", path: () => `/api/target-lists/x/export?format=none`, params: () => ({ id: String(targetListId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/target-lists/x/export`, params: () => ({ id: String(targetListId) }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.target.ts": [
    { method: "GET", path: () => `/api/targets/x`, params: () => ({ id: String(targetId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "PATCH", path: () => `/api/targets/x`, params: () => ({ id: String(targetId) }), options: { json: {} }, expect: projectPage(UPLOADERS) },
  ],
  "routes/api.scoring.ts": [
    { method: "GET", path: () => `/api/scorings/x`, params: () => ({ id: String(scoringId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/scorings/x`, params: () => ({ id: String(scoringId) }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  // Trained models peak on exact site positions: never shown below analyst (models.read: owner,
  // lead, analyst, reviewer; viewers and their tokens refused). The probe model never ran: members
  // get 409 from the raster (not published), past the gate; an empty start request gets 422.
  "routes/project-models.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/models`, params: pid, expect: projectPage(MODEL_READERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/models`, params: pid, options: { form: { reconstructionId: "" } }, expect: projectPage(UPLOADERS) },
  ],
  "routes/project-model.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/models/x`, params: (w) => ({ ...pid(w), modelId: String(modelId) }), expect: projectPage(MODEL_READERS) },
  ],
  "routes/api.project-models.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/models`, params: pid, expect: projectPage(MODEL_READERS) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/models`, params: pid, options: { json: {} }, expect: projectPage(UPLOADERS) },
  ],
  "routes/api.model.ts": [
    { method: "GET", path: () => `/api/models/x`, params: () => ({ id: String(modelId) }), expect: projectPage(MODEL_READERS) },
    { method: "POST", path: () => `/api/models/x`, params: () => ({ id: String(modelId) }), options: { json: {} }, expect: projectPage(MODEL_READERS) },
  ],
  "routes/api.model-raster.ts": [
    { method: "GET", path: () => `/api/models/x/raster`, params: () => ({ id: String(modelId) }), expect: projectPage(MODEL_READERS) },
    { method: "GET", path: () => `/api/models/x/raster?display=8`, params: () => ({ id: String(modelId) }), expect: projectPage(MODEL_READERS) },
    { method: "POST", path: () => `/api/models/x/raster`, params: () => ({ id: String(modelId) }), options: { json: {} }, expect: projectPage(MODEL_READERS) },
  ],
  "routes/api.model-validation.ts": [
    { method: "GET", path: () => `/api/models/x/validation`, params: () => ({ id: String(modelId) }), expect: projectPage(MODEL_READERS) },
    { method: "POST", path: () => `/api/models/x/validation`, params: () => ({ id: String(modelId) }), options: { json: {} }, expect: projectPage(MODEL_READERS) },
  ],
  // Reviews: every member reads them; reviewers and owners open and sign (reviews.sign); everyone but
  // viewers comments. Probes send empty bodies: allowed callers get 422 (or 405), past the gate.
  "routes/project-reviews.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/reviews`, params: pid, expect: projectPage(MEMBERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/reviews`, params: pid, options: { form: { title: "" } }, expect: projectPage(["owner", "reviewer"]) },
  ],
  "routes/project-review.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/reviews/x`, params: (w) => ({ ...pid(w), reviewId: String(reviewId) }), expect: projectPage(MEMBERS) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/reviews/x`, params: (w) => ({ ...pid(w), reviewId: String(reviewId) }), options: { form: { intent: "comment", body: "" } }, expect: projectPage(["owner", "lead", "analyst", "reviewer"]) },
    { method: "POST", path: (w) => `/projects/${w.projectId}/reviews/x`, params: (w) => ({ ...pid(w), reviewId: String(reviewId) }), options: { form: { intent: "decide" } }, expect: projectPage(["owner", "reviewer"]) },
  ],
  "routes/project-review-report.tsx": [
    { method: "GET", path: (w) => `/projects/${w.projectId}/reviews/x/report`, params: (w) => ({ ...pid(w), reviewId: String(reviewId) }), expect: projectPage(MEMBERS) },
  ],
  "routes/api.project-reviews.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/reviews`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/reviews`, params: pid, options: { json: {} }, expect: projectPage(["owner", "reviewer"]) },
  ],
  "routes/api.review.ts": [
    { method: "GET", path: () => `/api/reviews/x`, params: () => ({ id: String(reviewId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/reviews/x`, params: () => ({ id: String(reviewId) }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.review-decision.ts": [
    { method: "POST", path: () => `/api/reviews/x/decision`, params: () => ({ id: String(reviewId) }), options: { json: {} }, expect: projectPage(["owner", "reviewer"]) },
  ],
  "routes/api.review-comments.ts": [
    { method: "POST", path: () => `/api/reviews/x/comments`, params: () => ({ id: String(reviewId) }), options: { json: {} }, expect: projectPage(["owner", "lead", "analyst", "reviewer"]) },
  ],
  // The probe review's scoring never ran: members get 404 (no such map), past the gate.
  "routes/api.review-map.ts": [
    { method: "GET", path: () => `/api/reviews/x/map.png`, params: () => ({ id: String(reviewId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/reviews/x/map.png`, params: () => ({ id: String(reviewId) }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.scoring-raster.ts": [
    // The probe scoring never ran: members get 409 (not published), which is past the gate.
    { method: "GET", path: () => `/api/scorings/x/raster/potential`, params: () => ({ id: String(scoringId), name: "potential" }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/scorings/x/raster/potential`, params: () => ({ id: String(scoringId), name: "potential" }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/project-validation.tsx": [{ method: "GET", path: (w) => `/projects/${w.projectId}/validation`, params: pid, expect: projectPage(MEMBERS) }],
  // The probe scoring never ran: members get 409 (not published), past the gate.
  "routes/api.scoring-validation.ts": [
    { method: "GET", path: () => `/api/scorings/x/validation`, params: () => ({ id: String(scoringId) }), expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "POST", path: () => `/api/scorings/x/validation`, params: () => ({ id: String(scoringId) }), options: { json: {} }, expect: projectPage([...MEMBERS, "viewerToken"]) },
  ],
  "routes/api.project-classification.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/classification`, params: pid, expect: projectPage([...MEMBERS, "viewerToken"]) },
    { method: "PUT", path: (w) => `/api/projects/${w.projectId}/classification`, params: pid, options: { json: {} }, expect: projectPage(["owner", "lead"]) },
  ],
  "routes/api.project-holdout.ts": [
    { method: "GET", path: (w) => `/api/projects/${w.projectId}/holdout`, params: pid, expect: projectPage(["owner", "lead"]) },
    { method: "PUT", path: (w) => `/api/projects/${w.projectId}/holdout`, params: pid, options: { json: {} }, expect: projectPage(["owner", "lead"]) },
    { method: "POST", path: (w) => `/api/projects/${w.projectId}/holdout`, params: pid, options: { json: {} }, expect: projectPage(["owner", "lead"]) },
  ],
};

interface RouteEntry {
  file: string;
  children?: RouteEntry[];
}
function routeFiles(list: RouteEntry[]): string[] {
  return list.flatMap((r) => [r.file, ...(r.children ? routeFiles(r.children) : [])]);
}

const FILES = routeFiles(routes as RouteEntry[]);

let world: World;
let openSessionId: number;
let closedSessionId: number;
let datasetId: number;
let reconstructionId: number;
let jobId: string;
let scoringId: number;
let uncertaintyRunId = 0;
let reviewId: number;
let modelId: number;
let targetListId: number;
let targetId: number;
let weightSetId: number;
/** A dataset row to probe (its storage keys point nowhere; deleting it tolerates that). */
async function makeDataset(w: World): Promise<number> {
  const [d] = await db()
    .insert(datasets)
    .values({ projectId: w.projectId, kind: "survey_area", name: "Probe", format: "geojson", originalKey: "uploads/p0/probe.json", originalName: "probe.geojson", sizeBytes: 1, sha256: "0", derivedKey: "datasets/p0/probe.json", derivedFormat: "geojson", crsEpsg: 32733, count: 1 })
    .returning({ id: datasets.id });
  return d.id;
}
/** A weight set with one version (the catalogue's starting content). */
async function makeWeightSet(w: World): Promise<number> {
  const { set } = await createWeightSet({ projectId: w.projectId, name: `Probe ${++weightSetCount}`, userId: w.userIds.analyst });
  return set.id;
}
let weightSetCount = 0;
beforeAll(async () => {
  world = await buildWorld("mx");
  openSessionId = (await startSession(world.projectId, { title: "Probe", method: "direct" }, { userId: world.userIds.lead })).id;
  closedSessionId = (await startSession(world.projectId, { title: "Probe, closed", method: "direct" }, { userId: world.userIds.lead })).id;
  await closeSession((await getSession(closedSessionId))!, { userId: world.userIds.lead, name: "Lead Person" });
  weightSetId = await makeWeightSet(world);
  datasetId = await makeDataset(world);
  // A reconstruction that never ran, with its (queued) job row: enough to probe the gates.
  const [run] = await db().insert(jobRuns).values({ projectId: world.projectId, kind: "reconstruction", payload: {} }).returning({ id: jobRuns.id });
  jobId = run.id;
  const [r] = await db()
    .insert(reconstructions)
    .values({ projectId: world.projectId, inputsHash: "probe", params: { agesKa: [12], oceanSides: ["south"], tidalRangeM: 2, streamThresholdKm2: 1 }, engineVersion: "probe", jobRunId: jobId })
    .returning({ id: reconstructions.id });
  reconstructionId = r.id;
  await db().update(jobRuns).set({ payload: { reconstructionId } }).where(eq(jobRuns.id, jobId));
  // A scoring of it that never ran (a weight set of its own, so it does not depend on other probes).
  const [probeSet] = await db().insert(weightSets).values({ projectId: world.projectId, name: "Scoring probe" }).returning({ id: weightSets.id });
  const [probeVersion] = await db().insert(weightSetVersions).values({ weightSetId: probeSet.id, version: 1, content: defaultWeightSetContent() as unknown as Record<string, unknown>, contentHash: "probe" }).returning({ id: weightSetVersions.id });
  const [sc] = await db()
    .insert(scorings)
    .values({ projectId: world.projectId, reconstructionId, weightSetVersionId: probeVersion.id, target: { kind: "age", ageKa: 12 }, inputsHash: "probe" })
    .returning({ id: scorings.id });
  scoringId = sc.id;
  // An uncertainty run of it that never ran.
  const [ur] = await db()
    .insert(uncertaintyRuns)
    .values({ projectId: world.projectId, reconstructionId, weightSetVersionId: probeVersion.id, target: { kind: "age", ageKa: 12 }, params: { draws: 10, seed: 1 }, inputsHash: "probe" })
    .returning({ id: uncertaintyRuns.id });
  uncertaintyRunId = ur.id;
  // An open review of that scoring (a hand-made snapshot: the gates do not read its files).
  const snapshot = {
    format: 1,
    project: { id: world.projectId, name: "Farrow Deep", crsEpsg: 32733 },
    reconstruction: { id: reconstructionId, name: "", inputsHash: "probe", engineVersion: "probe", agesKa: [12], grid: { width: 1, height: 1, originX: 0, originY: 0, cellSizeX: 1, cellSizeY: 1 }, publishedAt: null, manifestSha256: "probe", layers: 0 },
    subject: { kind: "weights", weightSet: { id: probeSet.id, name: "Scoring probe" }, version: { id: probeVersion.id, number: 1, contentHash: "probe" } },
    scoring: { id: scoringId, inputsHash: "probe", target: { kind: "age", ageKa: 12 }, targetLabel: "12 ka", publishedAt: null, files: [], displayChecksum: null },
    classification: { kind: "fixed", thresholds: [0.75, 0.5, 0.25], labels: ["very high", "high", "medium", "low"] },
    uncertaintyRun: null,
    exclusionBuffersM: null,
    datasets: [],
    refs: [],
  };
  const [rv] = await db().insert(reviews).values({ projectId: world.projectId, title: "Probe review", snapshot, snapshotHash: "probe", createdBy: world.userIds.reviewer }).returning({ id: reviews.id });
  reviewId = rv.id;
  // A model of it that never ran.
  const [md] = await db().insert(models).values({ projectId: world.projectId, reconstructionId, name: "Probe model", params: { ageKa: 12 }, inputsHash: "probe" }).returning({ id: models.id });
  modelId = md.id;
  // A published core-target list of that scoring with one target (hand-made: the gates do not read its layers).
  const [tl] = await db()
    .insert(targetLists)
    .values({ projectId: world.projectId, name: "Probe targets", source: { kind: "scoring", id: scoringId }, params: { crs: { epsg: 32733, label: "EPSG:32733" }, reconstruction: { id: reconstructionId }, source: { kind: "scoring", id: scoringId, label: "probe" } }, status: "published", publishedHash: "probe", publishedAt: new Date() })
    .returning({ id: targetLists.id });
  targetListId = tl.id;
  const [tg] = await db().insert(targets).values({ listId: tl.id, rank: 1, waypoint: "CT01", x: 500_000, y: 5_000_000, lon: 15, lat: -45, detail: {} }).returning({ id: targets.id });
  targetId = tg.id;
});

describe("the development outbox", () => {
  it("is not found from another machine, nor in production", async () => {
    const mod = await import("./routes/dev-outbox");
    expect((await call(mod.loader, "/dev/outbox", { clientAddress: "192.0.2.7" })).status).toBe(404);
    const env = process.env.NODE_ENV;
    process.env.NODE_ENV = "production";
    try {
      expect((await call(mod.loader, "/dev/outbox")).status).toBe(404);
    } finally {
      process.env.NODE_ENV = env;
    }
  });
});

describe("authorization matrix", () => {
  it("has a row for every route in app/routes.ts, and no row for a route that does not exist", () => {
    expect(FILES.filter((f) => !MATRIX[f]), "routes without a row in the matrix").toEqual([]);
    expect(Object.keys(MATRIX).filter((f) => !FILES.includes(f)), "rows for routes that do not exist").toEqual([]);
  });

  for (const file of FILES) {
    for (const probe of MATRIX[file] ?? []) {
      it(`${probe.method} ${file}`, async () => {
        const mod = await import(/* @vite-ignore */ `./${file}`);
        const fn = probe.method === "GET" ? mod.loader : mod.action;
        expect(fn, `${file} has no ${probe.method === "GET" ? "loader" : "action"}`).toBeTypeOf("function");
        const got: Record<string, Verdict> = {};
        const want: Record<string, Verdict> = {};
        for (const who of EVERYONE) {
          const res = await call(fn, probe.path(world), {
            method: probe.method,
            params: probe.freshParams ? await probe.freshParams(world) : (probe.params?.(world) ?? {}),
            headers: probe.freshSessions && who !== "signedOut" && who !== "viewerToken" ? { Cookie: await cookieFor(world.userIds[who]) } : headersFor(world, who),
            ...probe.options,
          });
          got[who] = isRefusal(res) ? "refuse" : "allow";
          want[who] = probe.expect[who] ?? probe.expect.default;
          expect(res.status, `${who}: unexpected server error`).toBeLessThan(500);
        }
        expect(got).toEqual(want);
      });
    }
  }
});
