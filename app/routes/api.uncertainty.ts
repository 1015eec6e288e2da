// GET /api/uncertainty/:id — an uncertainty run: status, progress, params (seed included), and once
// published its figures (convergence, one-at-a-time and variance-based sensitivity, per-block robust
// shares, envelopes). Any member may read it: it is built on a weight set, not a trained model.
import { requireUncertaintyAccess } from "~/resource-access.server";
import { getUncertaintyRun, uncertaintyView } from "~/uncertainty.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.uncertainty";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { uncertaintyRunId } = await requireUncertaintyAccess(request, params.id, "project.read");
  const s = await getUncertaintyRun(uncertaintyRunId);
  return Response.json({ run: uncertaintyView(s!) });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireUncertaintyAccess(request, params.id, "project.read");
  return methodNotAllowed(["GET"]);
}
