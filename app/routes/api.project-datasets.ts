// GET /api/projects/:projectId/datasets — the project's evidence.
// POST — multipart/form-data upload: `kind`, `file`, optional `name`, and for grids of heights
// `sign`, `datum`, `offset_to_msl_m`; `declared_epsg` for files without a CRS.
import { requireProjectAccess } from "~/permissions.server";
import { datasetView, getDataset, ingestUpload, listDatasets } from "~/datasets.server";
import { receiveUpload } from "~/uploads.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import type { Route } from "./+types/api.project-datasets";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const rows = await listDatasets(project.id);
  const out = [];
  for (const r of rows) {
    const full = await getDataset(project.id, r.id);
    if (full) out.push(datasetView(full.dataset, role, full.uploadedByName));
  }
  return Response.json({ datasets: out }, { headers: PRIVATE_HEADERS });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity, role } = await requireProjectAccess(request, params.projectId, "data.upload");
  if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
  return apiAction(async () => {
    const upload = await receiveUpload(request);
    const d = await ingestUpload(project, identity.user.id, upload, { clientAddress: context?.clientAddress });
    return Response.json({ dataset: datasetView(d, role, identity.user.name) }, { status: 201, headers: PRIVATE_HEADERS });
  });
}
