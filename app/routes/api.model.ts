// GET /api/models/:id — a trained model: status, progress, parameters, its card (inputs, sample
// counts, parameters, fold metrics, training time) and, once published, the raster's statistics.
// models.read only (owner, lead, analyst, reviewer): a viewer gets 403, a non-member 404. The card
// counts sites and cores; no position or record id is in it.
import { requireModelAccess } from "~/resource-access.server";
import { getModel, modelView } from "~/models.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.model";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { modelId } = await requireModelAccess(request, params.id, "models.read");
  const m = await getModel(modelId);
  return Response.json({ model: modelView(m!) }, { headers: { "Cache-Control": "private, no-store" } });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireModelAccess(request, params.id, "models.read");
  return methodNotAllowed(["GET"]);
}
