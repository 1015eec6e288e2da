// GET /api/models/:id/raster — a published model's probability raster as a GeoTIFF download
// (project CRS, Float32, NaN off the model age's land). ?display=8 — a quantised copy for the map,
// exactly as the layer API sends one (on the display grid, the mean over each display cell): raw codes, row-major, with X-Lowstand-Width/Height/Scale/
// Offset/Nodata-Code headers (value = code × scale + offset). ?preview=png — a picture of it (viridis,
// 0–1). models.read only: a viewer gets 403.
import { requireModelAccess } from "~/resource-access.server";
import { modelPictureBytes, modelRasterBytes, modelRasterFileName } from "~/models.server";
import { displayCopy, previewRgba } from "~/raster-display";
import { encodePng } from "~/png.server";
import { displayGridFor } from "~/display.server";
import { readGeoTiff } from "~/terrain/geotiff-read";
import { apiError } from "~/security.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.model-raster";

const PRIVATE = "private, no-store";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { modelId, project } = await requireModelAccess(request, params.id, "models.read");
  const url = new URL(request.url);
  const display = url.searchParams.get("display");
  const preview = url.searchParams.get("preview");
  if (display !== null && display !== "8") return apiError(400, "bad_display", "display must be 8 (bits).");
  if (preview !== null && preview !== "png") return apiError(400, "bad_preview", "preview must be png.");
  return apiAction(async () => {
    if (preview === "png") {
      // A picture for the model's page: viridis on the fixed 0–1 scale of a share of trees, the sea
      // transparent — of the display-resolution preview while the model still runs.
      const pic = await modelPictureBytes(modelId);
      const grid = (await readGeoTiff(new Uint8Array(pic.bytes))).grid;
      const p = previewRgba(grid.data, grid.spec.width, grid.spec.height, "NaN", { maxSide: 640, range: { min: 0, max: 1 } });
      return new Response(new Uint8Array(encodePng(p.width, p.height, p.rgba)), { headers: { "Content-Type": "image/png", "Cache-Control": PRIVATE, "X-Lowstand-Preview": pic.preview ? "display" : "full" } });
    }
    const { model, bytes } = await modelRasterBytes(modelId);
    if (display === null)
      return new Response(new Uint8Array(bytes), { headers: { "Content-Type": "image/tiff", "Content-Disposition": `attachment; filename="${modelRasterFileName(project, model.id, model.params ? (model.params as { ageKa: number }).ageKa : 0)}"`, "Cache-Control": PRIVATE } });
    const grid = (await readGeoTiff(new Uint8Array(bytes))).grid;
    const { step } = displayGridFor(grid.spec);
    const q = displayCopy(grid.data, grid.spec.width, grid.spec.height, step, "probability", 8);
    return new Response(new Uint8Array(q.data.buffer as ArrayBuffer, q.data.byteOffset, q.data.byteLength), {
      headers: {
        "Content-Type": "application/octet-stream",
        "X-Lowstand-Width": String(q.width),
        "X-Lowstand-Height": String(q.height),
        "X-Lowstand-Step": String(step),
        "X-Lowstand-Scale": String(q.scale),
        "X-Lowstand-Offset": String(q.offset),
        "X-Lowstand-Nodata-Code": String(q.nodataCode),
        "X-Lowstand-Units": encodeURIComponent("probability of presence (share of trees)"),
        "Cache-Control": PRIVATE,
      },
    });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireModelAccess(request, params.id, "models.read");
  return methodNotAllowed(["GET"]);
}
