// GET /api/projects/:projectId/weighing-sessions — the project's weighing sessions, newest first.
// POST — start one (owners and leads): { "title", "method": "direct" | "ahp", "ahpFactors"?: [...], "baseVersionId"?: n }.
import { requireProjectAccess } from "~/permissions.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { listSessions, startSession, startSessionBody } from "~/weighing-sessions.server";
import type { Route } from "./+types/api.project-sessions";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "project.read");
  return Response.json({ sessions: await listSessions(project.id) });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "weights.adopt");
  if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
  return apiAction(async () => {
    const body = await readJson(request, startSessionBody);
    const s = await startSession(project.id, body, { userId: identity.user.id, clientAddress: context?.clientAddress });
    return Response.json({ session: { id: s.id, title: s.title, method: s.method, ahpFactors: s.ahpFactors, status: s.status } }, { status: 201 });
  });
}
