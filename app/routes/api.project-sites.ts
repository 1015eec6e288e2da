// GET /api/projects/:projectId/sites — known sites as exactly as the caller's role allows.
import { requireProjectAccess } from "~/permissions.server";
import { PRIVATE_HEADERS, sitesFor } from "~/sites.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.project-sites";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "project.read");
  const view = await sitesFor(project, { userId: identity.user.id, role });
  return Response.json(
    {
      exact: view.exact.map((s) => ({ id: s.id, label: s.label, x: s.x, y: s.y, precisionM: s.precisionM, kind: s.siteKind, context: s.context, calBpFrom: s.calBpFrom, calBpTo: s.calBpTo, community: s.community, visibility: s.visibility })),
      generalised: view.generalised,
    },
    { headers: PRIVATE_HEADERS },
  );
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireProjectAccess(request, params.projectId, "project.read");
  return methodNotAllowed(["GET"]);
}
