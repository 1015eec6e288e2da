// POST /api/reviews/:id/decision (reviewers and owners) — sign the decision:
//   { decision: "accepted" | "accepted_with_conditions" | "changes_requested", conditions: [..],
//     note, password }. The password is the signer's own sign-in password (throttled like sign-in);
//   a wrong one is refused with 403 and nothing is stored. 200 with the signed review.
import { requireReviewAccess } from "~/resource-access.server";
import { decideReview, decisionRequest, getReviewRow, reviewView } from "~/reviews.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.review-decision";

export async function action({ request, params, context }: Route.ActionArgs) {
  const { reviewId, identity } = await requireReviewAccess(request, params.id, "reviews.sign");
  if (request.method !== "POST") return methodNotAllowed(["POST"]);
  return apiAction(async () => {
    const body = await readJson(request, decisionRequest);
    const review = (await getReviewRow(reviewId))!;
    await decideReview(review, identity.user, body, { clientAddress: context?.clientAddress });
    return Response.json({ review: await reviewView((await getReviewRow(reviewId))!) });
  });
}
