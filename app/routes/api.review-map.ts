// GET /api/reviews/:id/map.png?layer=potential|occupation|preservation — a map of the review's
// frozen scoring, drawn on the server from its published raster (checked against the SHA-256 the
// snapshot froze) in the browser map's colours: viridis over 0–1, unassessed cells hatched.
import { requireReviewAccess } from "~/resource-access.server";
import { getReviewRow } from "~/reviews.server";
import { REVIEW_MAPS, reviewMapPng, type ReviewMap } from "~/review-report.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { apiError } from "~/security.server";
import type { Route } from "./+types/api.review-map";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { reviewId } = await requireReviewAccess(request, params.id, "project.read");
  const layer = new URL(request.url).searchParams.get("layer") ?? "potential";
  if (!(REVIEW_MAPS as readonly string[]).includes(layer)) return apiError(404, "no_such_map", `No map "${layer}": a review draws ${REVIEW_MAPS.join(", ")}.`);
  return apiAction(async () => {
    const png = await reviewMapPng((await getReviewRow(reviewId))!, layer as ReviewMap);
    // The snapshot never changes, so the picture may be cached as long as the review lives.
    return new Response(png, { headers: { "Content-Type": "image/png", "Cache-Control": "private, max-age=86400" } });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireReviewAccess(request, params.id, "project.read");
  return methodNotAllowed(["GET"]);
}
