// The small invented shelf the job and desk integration tests build on: a 48 × 48 grid of 50 m cells
// from the engine's own generator (scripts/bench/synthetic-shelf.ts), placed in the project CRS (UTM
// 33S) at 480 000 / 5 030 000 — and uploading a file through the datasets API as a member would.
import { expect } from "vitest";
import { resolveCrs } from "~/terrain/crs";
import { writeGeoTiff } from "~/terrain/geotiff-write";
import { syntheticGrid } from "../../scripts/bench/synthetic-shelf";
import * as apiDatasets from "~/routes/api.project-datasets";
import { callWith, ORIGIN, type World } from "./world";

export const SHELF = { originX: 480_000, originY: 5_030_000, cellM: 50, size: 48 } as const;

/** The invented shelf as a GeoTIFF (seed 7), `size` cells a side. */
export function shelfTiff(size: number = SHELF.size): Uint8Array {
  const g = syntheticGrid(size, 7, SHELF.cellM);
  const crs = resolveCrs(32733);
  g.spec = { ...g.spec, originX: SHELF.originX, originY: SHELF.originY, crs: { epsg: crs.epsg, proj4: crs.proj4 } };
  return writeGeoTiff(g);
}

/** Uploads a file (bytes or text) as a dataset of `kind` through the API with `token`; returns its id. */
export async function uploadDataset(world: World, token: string, kind: string, content: string | Uint8Array, fileName: string, extra: Record<string, string> = {}): Promise<number> {
  const fd = new FormData();
  Object.entries({ kind, name: fileName, ...extra }).forEach(([k, v]) => fd.set(k, v));
  fd.set("file", new Blob([typeof content === "string" ? new TextEncoder().encode(content) : new Uint8Array(content)]), fileName);
  const res = await callWith(apiDatasets.action, new Request(new URL(`/api/projects/${world.projectId}/datasets`, ORIGIN), { method: "POST", body: fd, headers: { Authorization: `Bearer ${token}` } }), { projectId: String(world.projectId) });
  expect(res.status, await res.clone().text()).toBe(201);
  return (await res.json()).dataset.id;
}
