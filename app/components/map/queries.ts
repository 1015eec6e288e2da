// The map's data through TanStack Query: one key per reconstruction, layer and age, so stepping
// back to an age is instant and each layer is fetched once per tab.
import type { FeatureCollection } from "geojson";
import { fetchDisplayRaster, type DisplayRaster } from "./raster";
import { relativeCollection, type Origin } from "./geometry";
import type { MapData, SectionData } from "./types";

async function json<T>(url: string, what: string, signal?: AbortSignal): Promise<T> {
  const res = await fetch(url, { signal, headers: { Accept: "application/json" } });
  if (!res.ok) {
    let message = `${what} could not be loaded (${res.status}).`;
    try {
      const body = (await res.json()) as { error?: { message?: string } | string; message?: string };
      const m = typeof body.error === "string" ? body.message : body.error?.message;
      if (m) message = m;
    } catch {
      /* not JSON */
    }
    throw new Error(message);
  }
  return (await res.json()) as T;
}

export const mapQuery = (projectId: number, reconstructionId?: number | null) => ({
  queryKey: ["map", projectId, reconstructionId ?? "newest"] as const,
  queryFn: ({ signal }: { signal?: AbortSignal }) => json<MapData>(`/api/projects/${projectId}/map${reconstructionId ? `?reconstruction=${reconstructionId}` : ""}`, "The map", signal),
  staleTime: 60_000,
});

export const rasterQuery = (reconstructionId: number, layer: string, ageKa: number | null) => ({
  queryKey: ["raster", reconstructionId, layer, ageKa] as const,
  queryFn: ({ signal }: { signal?: AbortSignal }): Promise<DisplayRaster> => fetchDisplayRaster(reconstructionId, layer, ageKa, signal),
  staleTime: Infinity,
  gcTime: 10 * 60_000,
});

export const vectorQuery = (reconstructionId: number, what: string, ageKa: number, origin: Origin) => ({
  queryKey: ["vectors", reconstructionId, what, ageKa] as const,
  queryFn: async ({ signal }: { signal?: AbortSignal }): Promise<FeatureCollection> =>
    relativeCollection(await json<FeatureCollection>(`/api/reconstructions/${reconstructionId}/vectors/${what}?age=${ageKa}`, `The ${what.replace(/_/g, " ")}`, signal), origin),
  staleTime: Infinity,
  gcTime: 10 * 60_000,
});

export const sectionQuery = (reconstructionId: number, from: [number, number], to: [number, number], corridorM: number) => ({
  queryKey: ["section", reconstructionId, from[0], from[1], to[0], to[1], corridorM] as const,
  queryFn: ({ signal }: { signal?: AbortSignal }) =>
    json<SectionData>(`/api/reconstructions/${reconstructionId}/section?from=${from[0].toFixed(1)},${from[1].toFixed(1)}&to=${to[0].toFixed(1)},${to[1].toFixed(1)}&corridor=${corridorM}`, "The section", signal),
  staleTime: Infinity,
});
