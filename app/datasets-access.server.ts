// Access to one dataset by its id (API routes without a project in the path): the dataset's
// project decides, through the same gate as every project route.
import { eq } from "drizzle-orm";
import { db } from "./db.server";
import { datasets } from "./db/schema";
import { requireProjectAccess } from "./permissions.server";
import { requireIdentity } from "./auth.server";
import { refusal } from "./security.server";
import type { Capability } from "./permissions";

export async function requireDatasetAccess(request: Request, datasetIdParam: string | undefined, capability: Capability) {
  await requireIdentity(request);
  const notFound = () => refusal(request, 404, "no_such_dataset", "There is no dataset here, or you are not a member of its project.");
  if (!datasetIdParam || !/^\d{1,9}$/.test(datasetIdParam)) throw notFound();
  const [row] = await db().select({ projectId: datasets.projectId }).from(datasets).where(eq(datasets.id, Number(datasetIdParam)));
  if (!row) throw notFound();
  try {
    const access = await requireProjectAccess(request, String(row.projectId), capability);
    return { ...access, datasetId: Number(datasetIdParam) };
  } catch (e) {
    // A non-member learns nothing about the dataset either.
    if (e instanceof Response && e.status === 404) throw notFound();
    throw e;
  }
}
