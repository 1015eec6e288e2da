// Reading a published layer back: the GeoTIFF as stored, a quantised display copy, a PNG preview.
import { getReconstruction, layerKey } from "./reconstructions.server";
import { store } from "./storage.server";
import { readGeoTiff } from "./terrain/geotiff-read";
import { apiError } from "./security.server";
import type { Manifest, ManifestLayer } from "./terrain/reconstruct";

export async function findLayer(reconstructionId: number, name: string, ageParam: string | null) {
  const r = await getReconstruction(null, reconstructionId);
  if (!r || r.status !== "published" || !r.manifest) throw apiError(409, "not_published", "This reconstruction has no published layers (yet): wait for it to finish.");
  const manifest = r.manifest as unknown as Manifest;
  const ageKa = ageParam === null || ageParam === "" ? null : Number(ageParam);
  if (ageKa !== null && !Number.isFinite(ageKa)) throw apiError(400, "bad_age", `age must be a number of ka BP, not "${ageParam}".`);
  const layer: ManifestLayer | undefined = manifest.layers.find((l) => l.name === name && (l.ageKa ?? null) === ageKa);
  if (!layer) {
    const perAge = manifest.layers.some((l) => l.name === name && l.ageKa !== null);
    const known = [...new Set(manifest.layers.map((l) => l.name))].join(", ");
    throw apiError(404, "no_such_layer", perAge && ageKa === null ? `${name} is made per age: add ?age= with one of ${manifest.agesKa.join(", ")} ka.` : `No layer ${name}${ageKa !== null ? ` at ${ageKa} ka` : ""}. Layers: ${known}.`);
  }
  const key = layerKey(r, name, ageKa)!;
  return { r, manifest, layer, key, ageKa };
}

/** The layer's values (NaN where nodata). A layer with no valid cell (e.g. no lake at that age) reads as all NaN. */
export async function layerGrid(key: string, manifest: Manifest, layer: ManifestLayer) {
  if (layer.stats.validCount === 0) {
    const g = manifest.grid;
    const spec = { width: g.width, height: g.height, originX: g.originX, originY: g.originY, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY, crs: null };
    return { spec, data: new Float32Array(g.width * g.height).fill(NaN) };
  }
  return (await readGeoTiff(await store().getBytes(key))).grid;
}
