// POST /api/reviews/:id/comments — add to the discussion of an open review (reviewers, owners,
// leads and analysts; viewers read only): { body, parentId? } (parentId: the comment replied to).
import { requireReviewAccess } from "~/resource-access.server";
import { addReviewComment, commentRequest, getReviewRow, mayComment } from "~/reviews.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { refusal } from "~/security.server";
import { ROLE_LABELS } from "~/permissions";
import type { Route } from "./+types/api.review-comments";

export async function action({ request, params, context }: Route.ActionArgs) {
  const { reviewId, identity, role } = await requireReviewAccess(request, params.id, "project.read");
  if (!mayComment(role)) throw refusal(request, 403, "role_may_not", `As ${ROLE_LABELS[role].toLowerCase()} you may read the review but not comment. Ask a lead of the project.`);
  if (request.method !== "POST") return methodNotAllowed(["POST"]);
  return apiAction(async () => {
    const body = await readJson(request, commentRequest);
    const comment = await addReviewComment((await getReviewRow(reviewId))!, identity.user, body, { clientAddress: context?.clientAddress });
    return Response.json({ comment }, { status: 201 });
  });
}
