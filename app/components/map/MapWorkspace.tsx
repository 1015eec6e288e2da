// The map workspace: the map (deck.gl, browser only) with the working panel beside it, the cursor
// readout under it, the section drawer and the sea-level strip along the bottom. Every per-age
// layer follows the age chosen on the strip.
import { useQueries, useQueryClient, type Query } from "@tanstack/react-query";
import { lazy, Suspense, useCallback, useEffect, useMemo, useRef, useState, type ReactNode } from "react";
import { Link } from "react-router";
import type { FeatureCollection } from "geojson";
import { layerCatalogue, GROUP_ORDER, LAND_CLASSES, fmtValue, type LayerDef, type RasterDef, type VectorDef } from "./catalogue";
import { colourise, rasterCanvas, rasterValue, type DisplayRaster } from "./raster";
import { rasterQuery, vectorQuery } from "./queries";
import { relativeCollection } from "./geometry";
import { LayerList, type LayerState, type LayerStatus } from "./LayerList";
import { SeaLevelStrip } from "./SeaLevelStrip";
import { Readout, type ReadoutValue } from "./Readout";
import { SectionDrawer } from "./SectionDrawer";
import { Cautions } from "~/components/Cautions";
import type { RasterRender, VectorRender } from "./DeckMap.client";
import type { MapData } from "./types";
import { scaleGradient } from "./colour-scales";

const DeckMap = lazy(() => import("./DeckMap.client"));

type Reconstruction = NonNullable<MapData["reconstruction"]>;

/** What a page built on the workspace adds: its own raster on top, its working panel, readout lines. */
export interface WorkspaceExtras {
  /** the heading of the tool bar (default "Map") */
  title?: string;
  /** a working panel shown beside the layer list, first */
  workPanel?: { label: string; content: ReactNode };
  /** a picture drawn above every reconstruction raster; `tag` names what it shows (written to data-overlay-tag once drawn) */
  overlay?: { id: string; canvas: HTMLCanvasElement; opacity: number; tag: string } | null;
  /** extra readout lines for the cell under the pointer */
  extraReadout?: (col: number, row: number) => ReadoutValue[];
  /** told whenever the age on the strip changes */
  onAgeChange?: (ageKa: number) => void;
  /** layers to start hidden or shown, by id */
  initialVisibility?: Record<string, boolean>;
  /** false while the overlay is not yet the one for the age on the strip (the map is then not "drawn") */
  overlayReady?: boolean;
  /** a switch for the overlay at the head of the layer list (the map page's potential) */
  overlaySwitch?: { label: string; note: ReactNode; on: boolean; onChange: (on: boolean) => void };
}

export function MapWorkspace({ data, reconstruction: r, extras = {} }: { data: MapData; reconstruction: Reconstruction; extras?: WorkspaceExtras }) {
  const queryClient = useQueryClient();
  const grid = r.grid;
  const dgrid = r.displayGrid;
  const origin = useMemo(() => ({ originX: grid.originX, originY: grid.originY }), [grid.originX, grid.originY]);
  const extentM = useMemo(() => ({ width: grid.width * grid.cellSizeX, height: grid.height * grid.cellSizeY }), [grid]);
  const defs = useMemo(() => layerCatalogue(data), [data]);
  const [layerState, setLayerState] = useState<Record<string, LayerState>>(() => Object.fromEntries(defs.map((d) => [d.id, { visible: extras.initialVisibility?.[d.id] ?? d.visible, opacity: d.opacity }])));
  const stateOf = (d: LayerDef) => layerState[d.id] ?? { visible: d.visible, opacity: d.opacity };
  const [ageKa, setAgeKaState] = useState(r.agesKa[0]);
  const onAgeChange = extras.onAgeChange;
  const setAgeKa = useCallback((a: number) => {
    setAgeKaState(a);
    onAgeChange?.(a);
  }, [onAgeChange]);
  const [playing, setPlaying] = useState(false);
  const [panelOpen, setPanelOpen] = useState(true);
  const [panelTab, setPanelTab] = useState<"work" | "layers">(extras.workPanel ? "work" : "layers");
  const [hover, setHover] = useState<[number, number] | null>(null);
  const [sectionMode, setSectionMode] = useState(false);
  const [section, setSection] = useState<Array<[number, number]>>([]);
  const [fitSignal, setFitSignal] = useState(0);
  const [mounted, setMounted] = useState(false);
  useEffect(() => setMounted(true), []);

  const perAge = useMemo(() => new Set(r.layers.filter((l) => l.ageKa !== null).map((l) => l.name)), [r.layers]);
  const rasterDefs = defs.filter((d): d is RasterDef => d.kind === "raster");
  const ageVectorDefs = defs.filter((d): d is VectorDef => d.kind === "vector" && d.source.type === "age");
  const rasterAge = (d: RasterDef) => (perAge.has(d.layer) ? ageKa : null);
  const unitsOf = (layer: string) => r.layers.find((l) => l.name === layer)?.units;

  // Rasters: every visible one, and the ones the readout always reads.
  const wantedRasters = rasterDefs.filter((d) => stateOf(d).visible || d.alwaysRead);
  const rasterResults = useQueries({
    // While another age loads, keep showing the same layer at the age before (never another layer's data).
    queries: wantedRasters.map((d) => ({ ...rasterQuery(r.id, d.layer, rasterAge(d)), placeholderData: sameLayer<DisplayRaster>(d.layer) })),
  });
  const wantedVectors = ageVectorDefs.filter((d) => stateOf(d).visible);
  const vectorResults = useQueries({
    queries: wantedVectors.map((d) => ({ ...vectorQuery(r.id, (d.source as { what: string }).what, ageKa, origin), placeholderData: sameLayer<FeatureCollection>((d.source as { what: string }).what), retry: false })),
  });

  const maskDefs = defs.filter((d): d is VectorDef => d.kind === "vector" && d.source.type === "mask" && stateOf(d).visible);
  const maskResults = useQueries({
    queries: maskDefs.map((d) => ({ ...rasterQuery(r.id, (d.source as { layer: string }).layer, ageKa), placeholderData: sameLayer<DisplayRaster>((d.source as { layer: string }).layer) })),
  });

  // Step back and forth instantly: fetch the neighbouring ages' per-age layers in the background.
  useEffect(() => {
    const i = r.agesKa.indexOf(ageKa);
    for (const a of [r.agesKa[i + 1], r.agesKa[i - 1]]) {
      if (a === undefined) continue;
      for (const d of wantedRasters) if (perAge.has(d.layer)) void queryClient.prefetchQuery(rasterQuery(r.id, d.layer, a));
      for (const d of maskDefs) void queryClient.prefetchQuery(rasterQuery(r.id, (d.source as { layer: string }).layer, a));
      for (const d of wantedVectors) void queryClient.prefetchQuery({ ...vectorQuery(r.id, (d.source as { what: string }).what, a, origin), retry: false });
    }
    // (only when the age changes: the lists above are rebuilt on every render)
  }, [ageKa, r.id]);

  // Colour each raster once per loaded array (and style).
  const canvases = useRef(new WeakMap<DisplayRaster, HTMLCanvasElement>());
  const status: Record<string, LayerStatus> = {};
  const loaded = new Map<string, { def: RasterDef; raster: DisplayRaster; current: boolean }>();
  wantedRasters.forEach((d, i) => {
    const q = rasterResults[i];
    const raster = q?.data;
    status[d.id] = {
      loading: q?.isFetching ?? true,
      error: q?.error ? q.error.message : null,
      range: raster ? { min: raster.offset, max: raster.offset + 254 * raster.scale } : null,
      units: unitsOf(d.layer) ?? raster?.units,
    };
    if (raster) loaded.set(d.id, { def: d, raster, current: !q.isPlaceholderData });
  });
  const vectorData = new Map<string, FeatureCollection>();
  wantedVectors.forEach((d, i) => {
    const q = vectorResults[i];
    status[d.id] = { loading: q?.isFetching ?? true, error: q?.error ? "Not available for this reconstruction yet." : null, empty: !!q?.data && q.data.features.length === 0 && !q.isPlaceholderData };
    if (q?.data) vectorData.set(d.id, q.data);
  });
  const maskPoints = new Map<string, Array<[number, number]>>();
  maskDefs.forEach((d, i) => {
    const q = maskResults[i];
    const points = q?.data ? cellPoints(q.data, dgrid.cellSizeX, dgrid.cellSizeY) : null;
    status[d.id] = { loading: q?.isFetching ?? true, error: q?.error ? q.error.message : null, empty: !!points && points.length === 0 && !q.isPlaceholderData };
    if (points) maskPoints.set(d.id, points);
  });
  const ready = maskResults.every((q) => (q.data && !q.isPlaceholderData) || q.isError) && rasterResults.every((q) => (q.data && !q.isPlaceholderData) || q.isError) && vectorResults.every((q) => (q.data && !q.isPlaceholderData) || q.isError) && (extras.overlayReady ?? true);

  const rasterRenders: RasterRender[] = [];
  if (mounted) {
    for (const d of [...rasterDefs].reverse()) {
      const l = loaded.get(d.id);
      if (!l || !stateOf(d).visible) continue;
      let canvas = canvases.current.get(l.raster);
      if (!canvas) {
        canvas = rasterCanvas(colourise(l.raster, d.style, null), l.raster.width, l.raster.height);
        canvases.current.set(l.raster, canvas);
      }
      rasterRenders.push({ id: d.id, image: canvas, opacity: stateOf(d).opacity, nearest: d.nearest });
    }
  }
  const overlay = extras.overlay ?? null;
  if (mounted && overlay) rasterRenders.push({ id: overlay.id, image: overlay.canvas, opacity: overlay.opacity, nearest: true });
  const rasterKey = rasterRenders.map((x) => `${x.id}:${x.opacity}:${canvasId(x.image)}`).join("|");
  // The same arrays for deck.gl until a layer, its opacity or its picture changes.
  const stableRasters = useMemo(() => rasterRenders, [rasterKey]);

  const overlays = useMemo(() => new Map(data.overlays.map((o) => [o.datasetId, relativeCollection(o.geojson, origin)])), [data.overlays, origin]);
  const sites = useMemo(
    () => ({
      exact: data.sites.exact.map((s) => ({ label: s.label, x: s.x - origin.originX, y: s.y - origin.originY })),
      generalised: (data.sites.generalised?.cells ?? []).map((c) => ({ count: c.count, x: c.x - origin.originX, y: c.y - origin.originY })),
    }),
    [data.sites, origin],
  );
  const vectorRenders: VectorRender[] = [];
  for (const g of [...GROUP_ORDER].reverse()) {
    for (const d of defs.filter((x): x is VectorDef => x.kind === "vector" && x.group === g).reverse()) {
      const s = stateOf(d);
      if (!s.visible) continue;
      const src = d.source;
      if (src.type === "mask") {
        const pts = maskPoints.get(d.id);
        if (pts) vectorRenders.push({ id: d.id, type: "mask-points", what: src.layer, data: pts, opacity: s.opacity });
      } else if (src.type === "age") {
        const fc = vectorData.get(d.id);
        if (fc) vectorRenders.push({ id: d.id, type: "age-lines", what: src.what, data: fc, opacity: s.opacity });
      } else if (src.type === "overlay") {
        const fc = overlays.get(src.datasetId);
        if (fc) vectorRenders.push({ id: d.id, type: "overlay", overlayKind: src.overlayKind, data: fc, opacity: s.opacity });
      } else if (sites.exact.length) {
        vectorRenders.push({ id: d.id, type: "sites-exact", data: sites.exact, opacity: s.opacity });
      } else if (data.sites.generalised) {
        vectorRenders.push({ id: d.id, type: "sites-generalised", cellSizeM: data.sites.generalised.cellSizeM, data: sites.generalised, opacity: s.opacity });
      }
    }
  }
  const vectorKey = vectorRenders.map((v) => `${v.id}:${v.opacity}:${objectId(v.data)}`).join("|");
  const stableVectors = useMemo(() => vectorRenders, [vectorKey]);

  // The render counter: after every deck.gl frame, for tests and tools that wait on drawing.
  const wrapperRef = useRef<HTMLDivElement>(null);
  const renders = useRef(0);
  const latest = useRef({ ageKa, ready, overlayTag: overlay?.tag ?? "" });
  latest.current = { ageKa, ready, overlayTag: overlay?.tag ?? "" };
  const [renderedAge, setRenderedAge] = useState<number | null>(null);
  const onAfterRender = useCallback(() => {
    renders.current += 1;
    const el = wrapperRef.current;
    if (!el) return;
    el.dataset.renderCount = String(renders.current);
    el.dataset.overlayTag = latest.current.overlayTag;
    const done = latest.current.ready ? String(latest.current.ageKa) : "";
    if (el.dataset.renderedAge !== done) {
      el.dataset.renderedAge = done;
      setRenderedAge(latest.current.ready ? latest.current.ageKa : null);
    }
  }, []);

  // Playing: move on once the current age has been drawn, and stop at the youngest.
  useEffect(() => {
    if (!playing || renderedAge !== ageKa) return;
    const i = r.agesKa.indexOf(ageKa);
    if (i >= r.agesKa.length - 1) {
      setPlaying(false);
      return;
    }
    const t = setTimeout(() => setAgeKa(r.agesKa[i + 1]), 900);
    return () => clearTimeout(t);
  }, [playing, renderedAge, ageKa, r.agesKa]);
  const onPlay = (p: boolean) => {
    if (p && ageKa === r.agesKa[r.agesKa.length - 1]) setAgeKa(r.agesKa[0]);
    setPlaying(p);
  };

  const onHover = useCallback((xy: [number, number] | null) => setHover(xy), []);
  const onMapClick = useCallback(
    (xy: [number, number]) => {
      if (!sectionMode) return;
      setSection((s) => (s.length >= 2 ? [xy] : [...s, xy]));
    },
    [sectionMode],
  );
  useEffect(() => {
    if (!sectionMode) return;
    const onKey = (e: KeyboardEvent) => {
      if (e.key === "Escape") {
        setSectionMode(false);
        setSection([]);
      }
    };
    window.addEventListener("keydown", onKey);
    return () => window.removeEventListener("keydown", onKey);
  }, [sectionMode]);

  // Readout: values under the cursor from the arrays already loaded (no server call).
  const readoutValues: ReadoutValue[] = [];
  if (hover) {
    // display cells: the copies the map holds are on the display grid
    const col = Math.floor(hover[0] / dgrid.cellSizeX);
    const row = Math.floor(-hover[1] / dgrid.cellSizeY);
    if (extras.extraReadout) readoutValues.push(...extras.extraReadout(col, row));
    for (const d of rasterDefs) {
      const l = loaded.get(d.id);
      if (!l || d.layer === "hillshade" || !(stateOf(d).visible || d.alwaysRead)) continue;
      const v = rasterValue(l.raster, col, row);
      const text = v === null ? "—" : d.style.kind === "classes" ? (LAND_CLASSES.find((c) => c.value === Math.round(v))?.label ?? String(Math.round(v))) : d.style.kind === "mask" ? (Math.round(v) >= 1 ? "yes" : "no") : fmtValue(v, unitsOf(d.layer) ?? l.raster.units);
      readoutValues.push({ label: d.label + (perAge.has(d.layer) ? ` (${ageKa} ka)` : ""), text });
    }
  }

  const age = r.agesKa.includes(ageKa) ? ageKa : r.agesKa[0];
  const tool = "rounded-sm border px-2 py-0.5 text-sm";
  return (
    <div className="flex min-h-0 flex-1 flex-col">
      <div className="flex items-center gap-2 border-b border-sand-200 bg-sand-100 px-3 py-1">
        <h1 className="text-base font-semibold">{extras.title ?? "Map"}</h1>
        <span className="truncate text-sm text-sediment-600">
          <Link to={`/projects/${data.project.id}/reconstructions/${r.id}`} className="underline decoration-sand-400 hover:text-deep-800">
            {r.name || `Reconstruction ${r.id}`}
          </Link>{" "}
          · {data.seaLevel.label}
        </span>
        <span className="flex-1" />
        <button
          type="button"
          aria-pressed={sectionMode}
          onClick={() => {
            setSectionMode(!sectionMode);
            setSection([]);
          }}
          className={`${tool} ${sectionMode ? "border-deep-700 bg-deep-800 text-sand-50" : "border-sand-300 bg-white"}`}
          title="Click two points on the map to draw a cross-section (Esc to stop)"
        >
          Section
        </button>
        <button type="button" onClick={() => setFitSignal((n) => n + 1)} className={`${tool} border-sand-300 bg-white`}>
          Whole grid
        </button>
        <details className="relative">
          <summary className={`${tool} cursor-pointer list-none border-caution-600 bg-white text-caution-800`}>Cautions</summary>
          <div className="absolute right-0 z-10 mt-1 w-96 shadow-lg">
            <Cautions compact />
          </div>
        </details>
        <button type="button" onClick={() => setPanelOpen(!panelOpen)} aria-expanded={panelOpen} aria-controls="map-panel" className={`${tool} border-sand-300 bg-white`}>
          {panelOpen ? "Hide panel" : extras.workPanel ? "Panel" : "Layers"}
        </button>
      </div>
      {sectionMode ? <SectionEnds origin={origin} onDraw={(a, b) => setSection([a, b])} /> : null}
      <div className="flex min-h-0 flex-1">
        <div role="region" aria-label={`Map at ${age} ka BP (values under the pointer in the readout below)`} className="relative min-w-0 flex-1 bg-deep-950" ref={wrapperRef} data-testid="map" data-age={age} data-render-count="0" data-rendered-age="">
          {mounted ? (
            <Suspense fallback={<p className="p-4 text-sm text-sea-200">Loading the map…</p>}>
              <DeckMap extentM={extentM} rasters={stableRasters} vectors={stableVectors} section={section} crosshair={sectionMode} onHover={onHover} onClick={onMapClick} onAfterRender={onAfterRender} fitSignal={fitSignal} frameTag={`${age}:${ready}:${overlay?.tag ?? ""}`} />
            </Suspense>
          ) : null}
          {sectionMode && section.length < 2 ? (
            <p className="pointer-events-none absolute left-3 top-3 rounded-sm bg-deep-900/90 px-2 py-1 text-xs text-sand-50">
              {section.length === 0 ? "Section: click the first end (A)" : "Section: click the second end (B)"} · Esc to stop
            </p>
          ) : null}
        </div>
        {panelOpen ? (
          <aside id="map-panel" aria-label={extras.workPanel && panelTab === "work" ? extras.workPanel.label : "Layers"} className={`${extras.workPanel ? "w-[26rem]" : "w-80"} shrink-0 overflow-y-auto border-l border-sand-200 bg-sand-50 p-3`}>
            {extras.workPanel ? (
              <div role="tablist" aria-label="Panel" className="mb-3 flex gap-1 border-b border-sand-200">
                {(["work", "layers"] as const).map((t) => (
                  <button key={t} type="button" role="tab" aria-selected={panelTab === t} onClick={() => setPanelTab(t)} className={`-mb-px border-b-2 px-2 py-1 text-sm ${panelTab === t ? "border-ember-500 font-semibold" : "border-transparent text-sediment-600"}`}>
                    {t === "work" ? extras.workPanel!.label : "Layers"}
                  </button>
                ))}
              </div>
            ) : null}
            <AgeSummary ageKa={age} ages={r.ages} />
            {extras.workPanel && panelTab === "work" ? extras.workPanel.content : (<>
            {extras.overlaySwitch ? <OverlaySwitch {...extras.overlaySwitch} /> : null}
            <h2 className="mb-2 text-sm font-semibold">Layers</h2>
            <LayerList defs={defs} state={layerState} status={status} onChange={(id, next) => setLayerState((s) => ({ ...s, [id]: next }))} />
            <p className="mt-4 text-xs text-sediment-600">
              Grid {grid.width} × {grid.height} cells of {grid.cellSizeX} × {grid.cellSizeY} m{data.project.crsEpsg ? ` · EPSG:${data.project.crsEpsg}` : ""}. Values come from the reconstruction&apos;s display
              copy (8-bit{dgrid.step > 1 ? `, ${dgrid.width} × ${dgrid.height} cells: every ${dgrid.step} × ${dgrid.step} cells reduced to one` : ""}); the GeoTIFFs on the{" "}
              <Link className="underline" to={`/projects/${data.project.id}/reconstructions/${r.id}`}>
                reconstruction page
              </Link>{" "}
              hold full precision.
            </p>
            </>)}
          </aside>
        ) : null}
      </div>
      <Readout hover={hover} origin={origin} proj4={data.project.proj4} values={readoutValues} />
      {section.length === 2 ? <SectionDrawer reconstructionId={r.id} from={[section[0][0] + origin.originX, section[0][1] + origin.originY]} to={[section[1][0] + origin.originX, section[1][1] + origin.originY]} ageKa={age} onClose={() => setSection([])} /> : null}
      <SeaLevelStrip points={data.seaLevel.points} label={data.seaLevel.label} agesKa={r.agesKa} ageKa={age} onAge={setAgeKa} playing={playing} onPlay={onPlay} />
    </div>
  );
}

/** The current age in words: sea level and how much of the grid is land, sea, intertidal and lake. */
function AgeSummary({ ageKa, ages }: { ageKa: number; ages: Reconstruction["ages"] }) {
  const a = ages?.find((x) => x.ageKa === ageKa);
  if (!a) return null;
  const total = a.counts.land + a.counts.sea + a.counts.intertidal + a.counts.lake;
  const pct = (n: number) => (total ? `${((100 * n) / total).toFixed(n && n < total / 100 ? 1 : 0)} %` : "—");
  return (
    <p className="mb-3 rounded-sm border-l-4 border-ember-500 bg-white px-2 py-1 text-xs tabular-nums text-sediment-800" data-testid="age-summary">
      <span className="font-semibold">{ageKa} ka BP</span>
      {a.seaLevelM !== null ? ` · sea level ${a.seaLevelM.toFixed(1).replace("-", "−")} m` : ""}
      <br />
      land {pct(a.counts.land)} · sea {pct(a.counts.sea)} · intertidal {pct(a.counts.intertidal)} · lake {pct(a.counts.lake)} of the grid
    </p>
  );
}

/** The section's ends typed as project coordinates: the keyboard's way to draw a section. */
function SectionEnds({ origin, onDraw }: { origin: { originX: number; originY: number }; onDraw: (a: [number, number], b: [number, number]) => void }) {
  const [error, setError] = useState<string | null>(null);
  const parse = (v: FormDataEntryValue | null): [number, number] | null => {
    const m = /^\s*(-?\d+(?:\.\d+)?)\s*[,;\s]\s*(-?\d+(?:\.\d+)?)\s*$/.exec(String(v ?? ""));
    return m ? [Number(m[1]) - origin.originX, Number(m[2]) - origin.originY] : null;
  };
  return (
    <form
      className="flex flex-wrap items-center gap-2 border-b border-sand-200 bg-sand-50 px-3 py-1 text-xs"
      onSubmit={(e) => {
        e.preventDefault();
        const f = new FormData(e.currentTarget);
        const a = parse(f.get("a"));
        const b = parse(f.get("b"));
        if (!a || !b) return setError("Give each end as x, y in metres in the project's CRS, e.g. 483380, 5026120.");
        setError(null);
        onDraw(a, b);
      }}
    >
      <span className="text-sediment-600">Click two points on the map, or type the ends (project CRS, m):</span>
      <label className="flex items-center gap-1">
        A <input name="a" className="w-40 rounded-sm border border-sand-300 bg-white px-1 py-0.5 tabular-nums" placeholder="x, y" />
      </label>
      <label className="flex items-center gap-1">
        B <input name="b" className="w-40 rounded-sm border border-sand-300 bg-white px-1 py-0.5 tabular-nums" placeholder="x, y" />
      </label>
      <button type="submit" className="rounded-sm border border-sand-300 bg-white px-2 py-0.5">
        Draw section
      </button>
      {error ? <span role="alert" className="text-caution-800">{error}</span> : null}
    </form>
  );
}

/** The centres (relative to the origin) of a mask's set cells, once per loaded array. */
const pointCache = new WeakMap<DisplayRaster, Array<[number, number]>>();
function cellPoints(m: DisplayRaster, cellSizeX: number, cellSizeY: number): Array<[number, number]> {
  let pts = pointCache.get(m);
  if (!pts) {
    pts = [];
    for (let i = 0; i < m.codes.length; i++) {
      const v = rasterValue(m, i % m.width, Math.floor(i / m.width));
      if (v !== null && Math.round(v) >= 1) pts.push([((i % m.width) + 0.5) * cellSizeX, -(Math.floor(i / m.width) + 0.5) * cellSizeY]);
    }
    pointCache.set(m, pts);
  }
  return pts;
}

/** placeholderData that keeps the previous result only when it was the same layer (keys: [kind, id, layer, age]). */
function sameLayer<T>(layer: string) {
  return (previous: T | undefined, previousQuery: Query<T, Error, T, readonly unknown[]> | undefined) => (previousQuery?.queryKey[2] === layer ? previous : undefined);
}

const ids = new WeakMap<object, number>();
let nextId = 1;
function objectId(o: object): number {
  let id = ids.get(o);
  if (!id) {
    id = nextId++;
    ids.set(o, id);
  }
  return id;
}
const canvasId = objectId;

/** One switch for a picture the page draws over the map (not a reconstruction layer): its name, legend and note. */
function OverlaySwitch({ label, note, on, onChange }: NonNullable<WorkspaceExtras["overlaySwitch"]>) {
  return (
    <section aria-label={label} className="mb-3 rounded-sm border border-sand-200 bg-white p-2" data-testid="overlay-switch">
      <label className="flex items-center gap-2 text-sm font-medium">
        <input type="checkbox" checked={on} onChange={(e) => onChange(e.target.checked)} />
        {label}
      </label>
      <div className="mt-1 flex items-center gap-1.5 text-[11px] text-sediment-600">
        0 <span className="inline-block h-2 w-24 rounded-sm" style={{ background: scaleGradient("viridis") }} aria-hidden="true" /> 1 · <span className="inline-block h-2 w-4 rounded-sm border border-sediment-400" style={{ background: "repeating-linear-gradient(45deg, #787878 0 1px, #e1ded7 1px 3px)" }} aria-hidden="true" /> unassessed
      </div>
      <div className="mt-1 text-[11px] text-sediment-600">{note}</div>
    </section>
  );
}
