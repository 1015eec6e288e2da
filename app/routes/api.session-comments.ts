// POST /api/weighing-sessions/:sessionId/comments — add a remark to the discussion (everyone but
// viewers): { "body": "…", "factor"?: factor id }.
import { addComment, commentBody, requireSessionAccess } from "~/weighing-sessions.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.session-comments";

export async function action({ request, params }: Route.ActionArgs) {
  const { session, identity } = await requireSessionAccess(request, params.sessionId, "comment");
  if (request.method !== "POST") return methodNotAllowed(["POST"]);
  return apiAction(async () => {
    const body = await readJson(request, commentBody);
    const comment = await addComment(session, body, { userId: identity.user.id, name: identity.user.name });
    return Response.json({ comment }, { status: 201 });
  });
}
