// GET /api/projects/:projectId/classification — the one project classification (every member):
//   thresholds from the lowest class up, class names, each class's range, and for quantile classes
//   the shares asked for and achieved and the scoring they were frozen from.
// PUT (JSON, leads and owners) { kind: "fixed", thresholds, labels? } or
//   { kind: "quantile", scoringId, shares, labels?, bins? } — thresholds increasing inside 0–1,
//   1 to 9 of them; a bad body is refused with a 4xx naming the problem and nothing saved.
//   Audit-logged with the classification before and after.
import { requireProjectAccess } from "~/permissions.server";
import { classificationBody, classificationView, setClassification, storedClassification } from "~/validations.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import type { Route } from "./+types/api.project-classification";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "project.read");
  return Response.json({ classification: classificationView(storedClassification(project.classification)) }, { headers: PRIVATE_HEADERS });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "project.edit");
  if (request.method !== "PUT") return methodNotAllowed(["GET", "PUT"]);
  return apiAction(async () => {
    const body = await readJson(request, classificationBody);
    const saved = await setClassification(project.id, body, identity.user.id, { clientAddress: context?.clientAddress });
    return Response.json({ classification: classificationView(saved) }, { headers: PRIVATE_HEADERS });
  });
}
