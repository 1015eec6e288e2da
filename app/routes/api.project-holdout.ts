// The hold-out set (issue 10), kept by leads and owners only:
// GET  /api/projects/:projectId/holdout — which site records are held out, and whether revealed.
// PUT  (JSON) { siteIds } — the held-out records (all others are not); a changed set starts hidden.
// POST (JSON) { action: "reveal" | "hide" } — reveal the hold-out to the team's validations, or
//   hide it again. Every change is audit-logged. Validations say only how many are held out.
import { requireProjectAccess } from "~/permissions.server";
import { holdoutActionBody, holdoutBody, holdoutState, revealOrHideHoldout, setHoldout } from "~/validations.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import type { Route } from "./+types/api.project-holdout";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "project.edit");
  return Response.json({ holdout: await holdoutState(project.id) }, { headers: PRIVATE_HEADERS });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "project.edit");
  const meta = { clientAddress: context?.clientAddress };
  if (request.method === "PUT")
    return apiAction(async () => {
      const { siteIds } = await readJson(request, holdoutBody);
      return Response.json({ holdout: await setHoldout(project.id, siteIds, identity.user.id, meta) }, { headers: PRIVATE_HEADERS });
    });
  if (request.method === "POST")
    return apiAction(async () => {
      const { action: what } = await readJson(request, holdoutActionBody);
      return Response.json({ holdout: await revealOrHideHoldout(project.id, what, identity.user.id, meta) }, { headers: PRIVATE_HEADERS });
    });
  return methodNotAllowed(["GET", "PUT", "POST"]);
}
