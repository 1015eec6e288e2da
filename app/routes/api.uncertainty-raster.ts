// GET /api/uncertainty/:id/raster/:name — a published run's raster as a GeoTIFF (project CRS,
// Float32, NaN nodata): p_high, mean, spread; with landscape draws also p_sea, flooding_age_early and
// flooding_age_late.
import { requireUncertaintyAccess } from "~/resource-access.server";
import { uncertaintyRasterDownload } from "~/uncertainty.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.uncertainty-raster";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { uncertaintyRunId, project } = await requireUncertaintyAccess(request, params.id, "project.read");
  return apiAction(async () => {
    const { bytes, fileName } = await uncertaintyRasterDownload(project, uncertaintyRunId, params.name);
    return new Response(new Uint8Array(bytes), { headers: { "Content-Type": "image/tiff", "Content-Disposition": `attachment; filename="${fileName}"`, "Cache-Control": "private, max-age=3600" } });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireUncertaintyAccess(request, params.id, "project.read");
  return methodNotAllowed(["GET"]);
}
