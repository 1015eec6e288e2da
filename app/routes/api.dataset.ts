// GET /api/datasets/:datasetId — one dataset's metadata and provenance.
// DELETE — remove it and its stored files (analysts and up).
import { requireDatasetAccess } from "~/resource-access.server";
import { datasetView, deleteDataset, getDataset } from "~/datasets.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import type { Route } from "./+types/api.dataset";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role, datasetId } = await requireDatasetAccess(request, params.datasetId, "project.read");
  const row = await getDataset(project.id, datasetId);
  return Response.json({ dataset: datasetView(row!.dataset, role, row!.uploadedByName) }, { headers: PRIVATE_HEADERS });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity, datasetId } = await requireDatasetAccess(request, params.datasetId, "data.upload");
  if (request.method !== "DELETE") return methodNotAllowed(["GET", "DELETE"]);
  return apiAction(async () => {
    await deleteDataset(project.id, datasetId, identity.user.id, { clientAddress: context?.clientAddress });
    return new Response(null, { status: 204 });
  });
}
