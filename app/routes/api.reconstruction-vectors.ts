// GET /api/reconstructions/:id/vectors/:what?age=<ka> — lines traced from one age's rasters, in
// the project CRS: shoreline (landward edge of sea and intertidal cells), lake_margins, or streams
// (LineStrings with their Strahler order).
import { requireReconstructionAccess } from "~/resource-access.server";
import { vectorsAt } from "~/map.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.reconstruction-vectors";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { reconstructionId } = await requireReconstructionAccess(request, params.id, "project.read");
  const fc = await vectorsAt(reconstructionId, params.what, new URL(request.url).searchParams.get("age"));
  return Response.json(fc, { headers: { "Cache-Control": "private, max-age=3600" } });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireReconstructionAccess(request, params.id, "project.read");
  return methodNotAllowed(["GET"]);
}
