// GET /api/reconstructions/:id — status, parameters and (once published) the manifest.
import { requireReconstructionAccess } from "~/resource-access.server";
import { getReconstruction } from "~/reconstructions.server";
import { reconstructionView } from "~/reconstruction-view.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.reconstruction";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { reconstructionId } = await requireReconstructionAccess(request, params.id, "project.read");
  const r = await getReconstruction(null, reconstructionId);
  return Response.json({ reconstruction: reconstructionView(r!) });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireReconstructionAccess(request, params.id, "project.read");
  return methodNotAllowed(["GET"]);
}
