// GET /api/models/:id/validation[?set=team|holdout|all&maxPrecisionM=…] — a published model's
// probability raster held against the project's in-situ sites and positive cores under the project
// classification, exactly as a scoring is (app/validations.server.ts validateRaster): Kvamme's gain,
// the capture curve and ROC AUC with bootstrap intervals and the number of sites. models.read only
// (a viewer gets 403: the model peaks on exact site positions).
import { requireModelAccess } from "~/resource-access.server";
import { modelValidation } from "~/models.server";
import { validationQuery } from "~/validations.server";
import { apiAction, methodNotAllowed, parseForm } from "~/route-helpers.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import type { Route } from "./+types/api.model-validation";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, identity, role, modelId } = await requireModelAccess(request, params.id, "models.read");
  return apiAction(async () => {
    const query = parseForm(validationQuery, Object.fromEntries(new URL(request.url).searchParams));
    const validation = await modelValidation(project.id, modelId, { userId: identity.user.id, role }, query);
    return Response.json({ validation }, { headers: PRIVATE_HEADERS });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireModelAccess(request, params.id, "models.read");
  return methodNotAllowed(["GET"]);
}
