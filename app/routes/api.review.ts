// GET /api/reviews/:id — one review: its frozen snapshot (and whether it still hashes to the stored
// snapshotHash), the decision with signature, and the comment threads. Every member reads it.
import { requireReviewAccess } from "~/resource-access.server";
import { getReviewRow, reviewView } from "~/reviews.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.review";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { reviewId } = await requireReviewAccess(request, params.id, "project.read");
  return Response.json({ review: await reviewView((await getReviewRow(reviewId))!) });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireReviewAccess(request, params.id, "project.read");
  return methodNotAllowed(["GET"]);
}
