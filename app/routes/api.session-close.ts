// POST /api/weighing-sessions/:sessionId/close — end the session without adopting anything (owners
// and leads). The record stays, read-only.
import { closeSession, requireSessionAccess } from "~/weighing-sessions.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.session-close";

export async function action({ request, params, context }: Route.ActionArgs) {
  const { session, identity } = await requireSessionAccess(request, params.sessionId, "weights.adopt");
  if (request.method !== "POST") return methodNotAllowed(["POST"]);
  return apiAction(async () => {
    await closeSession(session, { userId: identity.user.id, name: identity.user.name, clientAddress: context?.clientAddress });
    return Response.json({ closed: true });
  });
}
