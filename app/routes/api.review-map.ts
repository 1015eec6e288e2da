// GET /api/reviews/:id/map.png?layer=potential|occupation|preservation|probability — a map of the
// review's frozen scoring (or, for probability, its frozen model: models.read only), drawn on the server from its published raster (checked against the SHA-256 the
// snapshot froze) in the browser map's colours: viridis over 0–1, unassessed cells hatched.
import { requireReviewAccess } from "~/resource-access.server";
import { getReviewRow } from "~/reviews.server";
import { REVIEW_MAPS, reviewMapPng, reviewModelMapPng, type ReviewMap } from "~/review-report.server";
import { can } from "~/permissions";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { apiError } from "~/security.server";
import type { Route } from "./+types/api.review-map";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { reviewId, role } = await requireReviewAccess(request, params.id, "project.read");
  const layer = new URL(request.url).searchParams.get("layer") ?? "potential";
  if (layer === "probability") {
    // A trained model's map peaks on exact site positions: never below analyst (design §9).
    if (!can(role, "models.read")) return apiError(403, "forbidden", "A trained model's map is shown to analysts, leads, owners and reviewers only.");
    return apiAction(async () => new Response(await reviewModelMapPng((await getReviewRow(reviewId))!), { headers: { "Content-Type": "image/png", "Cache-Control": "private, max-age=86400" } }));
  }
  if (!(REVIEW_MAPS as readonly string[]).includes(layer)) return apiError(404, "no_such_map", `No map "${layer}": a review draws ${[...REVIEW_MAPS, "probability"].join(", ")}.`);
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
