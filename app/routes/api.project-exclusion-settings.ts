// GET /api/projects/:projectId/exclusion-settings — the buffers (m) added around each kind of
// discrete feature (wreck, anomaly, find_spot), with the defaults and who set them last.
// PUT (JSON) { wreck?, anomaly?, find_spot? } — sets them (0–5000 m each), audit-logged. Reviewers,
// leads and owners may: permissions.ts has no capability of its own for this, so the route checks
// "reviews.sign" OR "project.edit" (two checks) after the member gate.
import { requireProjectAccess } from "~/permissions.server";
import { can } from "~/permissions";
import { exclusionBuffersSchema, getExclusionSettings, setExclusionSettings } from "~/regulator.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { refusal } from "~/security.server";
import type { Route } from "./+types/api.project-exclusion-settings";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "project.read");
  return Response.json({ settings: await getExclusionSettings(project.id) });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "project.read");
  if (!can(role, "reviews.sign") && !can(role, "project.edit")) throw refusal(request, 403, "role_may_not", "Only the project's reviewers, leads and owners may set exclusion buffers.");
  if (request.method !== "PUT") return methodNotAllowed(["GET", "PUT"]);
  return apiAction(async () => {
    const body = await readJson(request, exclusionBuffersSchema);
    const settings = await setExclusionSettings(project.id, identity.user.id, body, { clientAddress: context?.clientAddress });
    return Response.json({ settings });
  });
}
