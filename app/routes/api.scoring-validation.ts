// GET /api/scorings/:id/validation[?set=team|holdout|all&maxPrecisionM=…] — the published scoring
// held against the project's in-situ sites and positive cores under the project classification:
// Kvamme's gain per class and cumulative, the site-capture curve and ROC AUC, with bootstrap
// intervals and the number of sites (app/validations.server.ts). Any member may read the figures;
// coordinates only on rows the caller may see exactly (never for viewers). Held-out sites are left
// out until a lead reveals the hold-out.
import { requireScoringAccess } from "~/resource-access.server";
import { scoringValidation, validationQuery } from "~/validations.server";
import { apiAction, methodNotAllowed, parseForm } from "~/route-helpers.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import type { Route } from "./+types/api.scoring-validation";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, identity, role, scoringId } = await requireScoringAccess(request, params.id, "project.read");
  return apiAction(async () => {
    const query = parseForm(validationQuery, Object.fromEntries(new URL(request.url).searchParams));
    const validation = await scoringValidation(project.id, scoringId, { userId: identity.user.id, role }, query);
    return Response.json({ validation }, { headers: PRIVATE_HEADERS });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireScoringAccess(request, params.id, "project.read");
  return methodNotAllowed(["GET"]);
}
