// GET /api/projects/:projectId/reviews — the project's review history, newest first (every member).
// POST (JSON, reviewers and owners) — open a review on a frozen snapshot:
//   { title, scoringId } or { title, modelId }, optionally uncertaintyRunId. 201 with the review,
//   its snapshot and snapshotHash; the project's leads are told by e-mail.
import { requireProjectAccess } from "~/permissions.server";
import { getReviewRow, listReviews, openReview, reviewRequest, reviewView } from "~/reviews.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.project-reviews";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "project.read");
  return Response.json({ reviews: await listReviews(project.id) });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "reviews.sign");
  if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
  return apiAction(async () => {
    const body = await readJson(request, reviewRequest);
    const r = await openReview(project.id, { id: identity.user.id, name: identity.user.name }, body, { clientAddress: context?.clientAddress });
    return Response.json({ review: await reviewView((await getReviewRow(r.id))!) }, { status: 201 });
  });
}
