// Access to a resource addressed by its own id (API routes without a project in the path): the
// resource's project decides, through the same gate as every project route, and a non-member
// learns nothing about whether the resource exists.
import { eq } from "drizzle-orm";
import { db } from "./db.server";
import { datasets, jobRuns, models, reconstructions, reviews, scorings, targetLists, targets, uncertaintyRuns, weightSets } from "./db/schema";
import { requireProjectAccess } from "./permissions.server";
import { requireIdentity } from "./auth.server";
import { refusal } from "./security.server";
import type { Capability } from "./permissions";

type Lookup = (id: string) => Promise<number | null | undefined>;

async function requireResourceAccess(request: Request, idParam: string | undefined, pattern: RegExp, lookup: Lookup, capability: Capability, code: string, what: string) {
  await requireIdentity(request);
  const notFound = () => refusal(request, 404, code, `There is no ${what} here, or you are not a member of its project.`);
  if (!idParam || !pattern.test(idParam)) throw notFound();
  const projectId = await lookup(idParam);
  if (!projectId) throw notFound();
  try {
    return await requireProjectAccess(request, String(projectId), capability);
  } catch (e) {
    if (e instanceof Response && e.status === 404) throw notFound();
    throw e;
  }
}

const NUMERIC = /^\d{1,9}$/;
const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/;

export async function requireDatasetAccess(request: Request, idParam: string | undefined, capability: Capability) {
  const access = await requireResourceAccess(request, idParam, NUMERIC, async (id) => (await db().select({ p: datasets.projectId }).from(datasets).where(eq(datasets.id, Number(id))))[0]?.p, capability, "no_such_dataset", "dataset");
  return { ...access, datasetId: Number(idParam) };
}

export async function requireReconstructionAccess(request: Request, idParam: string | undefined, capability: Capability) {
  const access = await requireResourceAccess(request, idParam, NUMERIC, async (id) => (await db().select({ p: reconstructions.projectId }).from(reconstructions).where(eq(reconstructions.id, Number(id))))[0]?.p, capability, "no_such_reconstruction", "reconstruction");
  return { ...access, reconstructionId: Number(idParam) };
}

export async function requireJobAccess(request: Request, idParam: string | undefined, capability: Capability) {
  const access = await requireResourceAccess(request, idParam, UUID, async (id) => (await db().select({ p: jobRuns.projectId }).from(jobRuns).where(eq(jobRuns.id, id)))[0]?.p, capability, "no_such_job", "job");
  return { ...access, jobRunId: idParam! };
}

export async function requireWeightSetAccess(request: Request, idParam: string | undefined, capability: Capability) {
  const access = await requireResourceAccess(request, idParam, NUMERIC, async (id) => (await db().select({ p: weightSets.projectId }).from(weightSets).where(eq(weightSets.id, Number(id))))[0]?.p, capability, "no_such_weight_set", "weight set");
  return { ...access, weightSetId: Number(idParam) };
}

export async function requireScoringAccess(request: Request, idParam: string | undefined, capability: Capability) {
  const access = await requireResourceAccess(request, idParam, NUMERIC, async (id) => (await db().select({ p: scorings.projectId }).from(scorings).where(eq(scorings.id, Number(id))))[0]?.p, capability, "no_such_scoring", "scoring");
  return { ...access, scoringId: Number(idParam) };
}

/** A trained model: members with models.read only (viewers get 403 — a model peaks on exact site positions). */
export async function requireModelAccess(request: Request, idParam: string | undefined, capability: Capability) {
  const access = await requireResourceAccess(request, idParam, NUMERIC, async (id) => (await db().select({ p: models.projectId }).from(models).where(eq(models.id, Number(id))))[0]?.p, capability, "no_such_model", "model");
  return { ...access, modelId: Number(idParam) };
}

/** A review (every member reads it; deciding needs reviews.sign). */
export async function requireReviewAccess(request: Request, idParam: string | undefined, capability: Capability) {
  const access = await requireResourceAccess(request, idParam, NUMERIC, async (id) => (await db().select({ p: reviews.projectId }).from(reviews).where(eq(reviews.id, Number(id))))[0]?.p, capability, "no_such_review", "review");
  return { ...access, reviewId: Number(idParam) };
}

/** An uncertainty run (built on a weight set: every member may read it, as a scoring). */
export async function requireUncertaintyAccess(request: Request, idParam: string | undefined, capability: Capability) {
  const access = await requireResourceAccess(request, idParam, NUMERIC, async (id) => (await db().select({ p: uncertaintyRuns.projectId }).from(uncertaintyRuns).where(eq(uncertaintyRuns.id, Number(id))))[0]?.p, capability, "no_such_uncertainty_run", "uncertainty run");
  return { ...access, uncertaintyRunId: Number(idParam) };
}

/** A core-target list (every member reads published lists; the module hides drafts from viewers). */
export async function requireTargetListAccess(request: Request, idParam: string | undefined, capability: Capability) {
  const access = await requireResourceAccess(request, idParam, NUMERIC, async (id) => (await db().select({ p: targetLists.projectId }).from(targetLists).where(eq(targetLists.id, Number(id))))[0]?.p, capability, "no_such_target_list", "target list");
  return { ...access, listId: Number(idParam) };
}

/** One core target, through its list's project. */
export async function requireTargetAccess(request: Request, idParam: string | undefined, capability: Capability) {
  const access = await requireResourceAccess(
    request,
    idParam,
    NUMERIC,
    async (id) => (await db().select({ p: targetLists.projectId }).from(targets).innerJoin(targetLists, eq(targetLists.id, targets.listId)).where(eq(targets.id, Number(id))))[0]?.p,
    capability,
    "no_such_target",
    "core target",
  );
  return { ...access, targetId: Number(idParam) };
}
