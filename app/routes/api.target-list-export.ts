// GET /api/target-lists/:id/export?format=csv|geojson|gpkg — the list for the ship (CSV, GeoJSON in
// WGS 84) or the GIS team (GeoPackage in the project CRS), each carrying the cautions of design §10
// (app/exports/README.md documents the fields). The potential GeoTIFF and the flooding-age raster are
// linked from GET /api/target-lists/:id `downloads`; shoreline vectors per age from
// /api/reconstructions/:id/vectors/shoreline?age=. Viewers: published lists, generalised positions;
// exports of exact positions are audit-logged.
import { requireTargetListAccess } from "~/resource-access.server";
import { exportTargetList } from "~/target-lists.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.target-list-export";

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const { project, identity, role, listId } = await requireTargetListAccess(request, params.id, "project.read");
  return apiAction(async () => {
    const format = new URL(request.url).searchParams.get("format");
    const out = await exportTargetList(listId, project, { userId: identity.user.id, role }, format, { clientAddress: context?.clientAddress });
    const body = typeof out.body === "string" ? out.body : new Uint8Array(out.body);
    return new Response(body, { headers: { ...PRIVATE_HEADERS, "Content-Type": out.type, "Content-Disposition": `attachment; filename="${out.file}"` } });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireTargetListAccess(request, params.id, "project.read");
  return methodNotAllowed(["GET"]);
}
