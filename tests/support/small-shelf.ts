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

/** The y of the three east–west survey lines across the shelf's northern half (the south stays unassessed). */
export const SHELF_LINE_YS = [SHELF.originY - 200, SHELF.originY - 600, SHELF.originY - 1000] as const;

/** Horizon picks every 100 m along the survey lines, `depthM` (default 2 m) below the seabed. */
export function shelfPicksCsv(depthM: (x: number) => number = () => 2): string {
  const lines = ["line_id,x,y,depth_below_seabed_m"];
  for (const [k, y] of SHELF_LINE_YS.entries())
    for (let x = SHELF.originX + 100; x < SHELF.originX + SHELF.size * SHELF.cellM - 50; x += 100) lines.push(`L${k + 1},${x},${y},${depthM(x)}`);
  return lines.join("\n") + "\n";
}

/** Two cores that reached the horizon (one found a land surface, one did not) and one refusal. */
export function shelfCoresCsv(): string {
  return [
    "core_id,x,y,horizon_reached,preserved_land_surface",
    `VC-01,${SHELF.originX + 500},${SHELF.originY - 400},yes,yes`,
    `VC-02,${SHELF.originX + 1800},${SHELF.originY - 800},yes,no`,
    `VC-03,${SHELF.originX + 1200},${SHELF.originY - 300},refused,unknown`,
  ].join("\n") + "\n";
}
