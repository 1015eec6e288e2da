// GET /api/reconstructions/:id/layers/:layer/preview.png?age=<ka> — a small coloured preview.
import { requireReconstructionAccess } from "~/resource-access.server";
import { findLayer, layerGrid } from "~/layers.server";
import { LAND_CLASS_COLOURS, previewRgba } from "~/raster-display";
import { encodePng } from "~/png.server";
import type { Route } from "./+types/api.reconstruction-layer-preview";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { reconstructionId } = await requireReconstructionAccess(request, params.id, "project.read");
  const { layer, key, manifest } = await findLayer(reconstructionId, params.layer, new URL(request.url).searchParams.get("age"));
  const grid = await layerGrid(key, manifest, layer);
  const p = previewRgba(grid.data, grid.spec.width, grid.spec.height, "NaN", { classes: layer.name === "land_class" ? LAND_CLASS_COLOURS : layer.units === "class" || layer.units === "mask" ? "categories" : undefined, maxSide: 192 });
  return new Response(new Uint8Array(encodePng(p.width, p.height, p.rgba)), { headers: { "Content-Type": "image/png", "Cache-Control": "private, max-age=3600" } });
}
