// GET /api/reconstructions/:id/layers/:layer?age=<ka> — the layer as a GeoTIFF (project CRS).
//   &display=8|16 — a quantised copy for the map: raw little-endian codes, row-major, with
//   X-Lowstand-Width/Height/Scale/Offset/Nodata-Code headers (value = code × scale + offset) and
//   X-Lowstand-Units (percent-encoded). The copy is on the display grid (app/display.server.ts): a
//   grid longer than the display's side is reduced by X-Lowstand-Step cells per display cell, with
//   the layer's own reduction (docs/layers.md).
import { requireReconstructionAccess } from "~/resource-access.server";
import { findLayer, layerGrid } from "~/layers.server";
import { store } from "~/storage.server";
import { displayCopy } from "~/raster-display";
import { displayGridFor } from "~/display.server";
import { apiError } from "~/security.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.reconstruction-layer";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { reconstructionId } = await requireReconstructionAccess(request, params.id, "project.read");
  const url = new URL(request.url);
  const { layer, key, ageKa, manifest } = await findLayer(reconstructionId, params.layer, url.searchParams.get("age"));
  const display = url.searchParams.get("display");
  if (display === null) {
    const bytes = await store().getBytes(key);
    const file = `r${reconstructionId}-${layer.name}${ageKa === null ? "" : `-${ageKa}ka`}.tif`;
    return new Response(new Uint8Array(bytes), { headers: { "Content-Type": "image/tiff", "Content-Disposition": `attachment; filename="${file}"`, "Cache-Control": "private, max-age=3600" } });
  }
  if (display !== "8" && display !== "16") return apiError(400, "bad_display", "display must be 8 or 16 (bits).");
  const grid = await layerGrid(key, manifest, layer);
  const { step } = displayGridFor(grid.spec);
  const q = displayCopy(grid.data, grid.spec.width, grid.spec.height, step, layer.name, display === "8" ? 8 : 16);
  const body = new Uint8Array(q.data.buffer as ArrayBuffer, q.data.byteOffset, q.data.byteLength);
  return new Response(body, {
    headers: {
      "Content-Type": "application/octet-stream",
      "X-Lowstand-Width": String(q.width),
      "X-Lowstand-Height": String(q.height),
      "X-Lowstand-Step": String(step),
      "X-Lowstand-Scale": String(q.scale),
      "X-Lowstand-Offset": String(q.offset),
      "X-Lowstand-Nodata-Code": String(q.nodataCode),
      // Units like "grey level 1–255" hold characters a header cannot: sent percent-encoded.
      "X-Lowstand-Units": encodeURIComponent(layer.units),
      "Cache-Control": "private, max-age=3600",
    },
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireReconstructionAccess(request, params.id, "project.read");
  return methodNotAllowed(["GET"]);
}
