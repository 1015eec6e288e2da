// GET /api/scorings/:id/raster/:name — a published scoring's raster as a GeoTIFF download (project
// CRS, Float32, NaN nodata): potential, occupation, or preservation (when the model was active).
import { requireScoringAccess } from "~/resource-access.server";
import { scoringRasterDownload } from "~/scorings.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.scoring-raster";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { scoringId, project } = await requireScoringAccess(request, params.id, "project.read");
  return apiAction(async () => {
    const { bytes, fileName } = await scoringRasterDownload(project, scoringId, params.name);
    return new Response(new Uint8Array(bytes), { headers: { "Content-Type": "image/tiff", "Content-Disposition": `attachment; filename="${fileName}"`, "Cache-Control": "private, max-age=3600" } });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireScoringAccess(request, params.id, "project.read");
  return methodNotAllowed(["GET"]);
}
