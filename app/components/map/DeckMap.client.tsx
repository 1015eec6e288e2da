// The map canvas: deck.gl in an orthographic view of the project's projected CRS (north up),
// coordinates relative to the grid origin. Browser only — loaded with a dynamic import so the page
// server-renders its chrome without WebGL.
import { useEffect, useLayoutEffect, useMemo, useRef, useState } from "react";
import { DeckGL, type DeckGLRef } from "@deck.gl/react";
import { OrthographicView, type Layer, type PickingInfo } from "@deck.gl/core";
import { BitmapLayer, GeoJsonLayer, PathLayer, PolygonLayer, ScatterplotLayer, TextLayer } from "@deck.gl/layers";
import type { Feature, FeatureCollection } from "geojson";
import { bboxCentre } from "./geometry";

type Rgba = [number, number, number, number];

export type VectorRender =
  | { id: string; type: "age-lines"; what: "shoreline" | "streams" | "lake_margins"; data: FeatureCollection; opacity: number }
  | { id: string; type: "overlay"; overlayKind: string; data: FeatureCollection; opacity: number }
  | { id: string; type: "mask-points"; what: "river_mouths" | "confluences"; data: Array<[number, number]>; opacity: number }
  | { id: string; type: "sites-exact"; data: Array<{ label: string; x: number; y: number }>; opacity: number }
  | { id: string; type: "sites-generalised"; cellSizeM: number; data: Array<{ x: number; y: number; count: number }>; opacity: number };

export interface RasterRender {
  id: string;
  image: HTMLCanvasElement;
  opacity: number;
  nearest: boolean;
}

export interface DeckMapProps {
  /** grid extent in metres: x from 0 to width, y from −height to 0 */
  extentM: { width: number; height: number };
  /** bottom first */
  rasters: RasterRender[];
  /** bottom first, drawn above every raster */
  vectors: VectorRender[];
  section: Array<[number, number]>;
  crosshair: boolean;
  onHover: (xy: [number, number] | null) => void;
  onClick: (xy: [number, number]) => void;
  onAfterRender: () => void;
  fitSignal: number;
  /** a redraw is forced whenever this changes (so the render counter reports a settled state) */
  frameTag: string;
}

const SAND_50: Rgba = [251, 248, 242, 255];
const DEEP_900: Rgba = [16, 35, 58, 255];
const STREAM_COLOURS: Rgba[] = [[127, 157, 180, 255], [150, 178, 198, 255], [176, 198, 214, 255], [205, 220, 230, 255]];

const OVERLAY_STYLE: Record<string, { line: Rgba; fill: Rgba; width: number; glyph: string; labelled: boolean }> = {
  interpretations: { line: [204, 121, 167, 255], fill: [204, 121, 167, 40], width: 1.6, glyph: "▲", labelled: false },
  survey_lines: { line: [143, 135, 124, 230], fill: [0, 0, 0, 0], width: 1, glyph: "·", labelled: false },
  horizon_picks: { line: [143, 135, 124, 230], fill: [0, 0, 0, 0], width: 1, glyph: "·", labelled: false },
  cores: { line: SAND_50, fill: [0, 0, 0, 0], width: 1, glyph: "◆", labelled: true },
  lease_blocks: { line: [214, 200, 171, 255], fill: [0, 0, 0, 0], width: 1.5, glyph: "■", labelled: true },
  survey_area: { line: [188, 169, 134, 255], fill: [0, 0, 0, 0], width: 1, glyph: "■", labelled: false },
  dredging_areas: { line: [143, 135, 124, 255], fill: [143, 135, 124, 45], width: 1.2, glyph: "▦", labelled: true },
  exclusions: { line: [179, 38, 30, 255], fill: [179, 38, 30, 50], width: 1.5, glyph: "✕", labelled: true },
  development_footprint: { line: [232, 223, 204, 255], fill: [232, 223, 204, 40], width: 1.5, glyph: "■", labelled: false },
  ocean_boundary: { line: [127, 157, 180, 255], fill: [0, 0, 0, 0], width: 1, glyph: "·", labelled: false },
};

function featureLabel(f: Feature): string {
  const p = (f.properties ?? {}) as Record<string, unknown>;
  for (const k of ["label", "name", "core_id", "coreId", "block_id", "blockId", "id", "NAME", "Name"]) {
    const v = p[k];
    if (typeof v === "string" || typeof v === "number") return String(v);
  }
  return "";
}

const withAlpha = (c: Rgba, opacity: number): Rgba => [c[0], c[1], c[2], Math.round(c[3] * opacity)];

function textLayer<D>(id: string, data: D[], getPosition: (d: D) => [number, number], getText: (d: D) => string, opts: { size?: number; offsetY?: number; colour?: Rgba; opacity: number; anchor?: "start" | "middle"; background?: boolean }) {
  return new TextLayer<D>({
    id,
    data,
    getPosition,
    getText,
    getSize: opts.size ?? 11,
    sizeUnits: "pixels",
    getColor: opts.colour ?? SAND_50,
    getPixelOffset: [opts.anchor === "start" ? 8 : 0, opts.offsetY ?? 0],
    getTextAnchor: opts.anchor ?? "middle",
    getAlignmentBaseline: "center",
    characterSet: "auto",
    fontFamily: "Work Sans, sans-serif",
    fontWeight: 500,
    background: opts.background ?? true,
    getBackgroundColor: [10, 24, 38, 200],
    backgroundPadding: [3, 1, 3, 1],
    opacity: opts.opacity,
  });
}

function vectorLayers(v: VectorRender): Layer[] {
  if (v.type === "age-lines") {
    if (v.what === "streams") {
      return [
        new GeoJsonLayer({
          id: v.id,
          data: v.data,
          stroked: true,
          filled: false,
          getLineColor: (f: Feature) => STREAM_COLOURS[Math.min(STREAM_COLOURS.length - 1, Math.max(0, Number(f.properties?.order ?? 1) - 1))],
          getLineWidth: (f: Feature) => 0.5 + 0.7 * Number(f.properties?.order ?? 1),
          lineWidthUnits: "pixels",
          lineCapRounded: true,
          lineJointRounded: true,
          opacity: v.opacity,
        }),
      ];
    }
    const shoreline = v.what === "shoreline";
    return [
      new GeoJsonLayer({
        id: v.id,
        data: v.data,
        stroked: true,
        filled: false,
        getLineColor: shoreline ? SAND_50 : [110, 160, 190, 255],
        getLineWidth: shoreline ? 2 : 1.2,
        lineWidthUnits: "pixels",
        lineJointRounded: true,
        opacity: v.opacity,
      }),
    ];
  }
  if (v.type === "mask-points") {
    // River mouths as filled dots ringed dark, confluences as hollow rings: shape as well as colour.
    const mouths = v.what === "river_mouths";
    return [
      new ScatterplotLayer<[number, number]>({
        id: v.id,
        data: v.data,
        getPosition: (d) => d,
        getRadius: mouths ? 4 : 3,
        radiusUnits: "pixels",
        stroked: true,
        filled: mouths,
        getFillColor: [191, 208, 220, 255],
        getLineColor: mouths ? DEEP_900 : [191, 208, 220, 255],
        getLineWidth: mouths ? 1.5 : 1.2,
        lineWidthUnits: "pixels",
        opacity: v.opacity,
      }),
    ];
  }
  if (v.type === "overlay") {
    const s = OVERLAY_STYLE[v.overlayKind] ?? OVERLAY_STYLE.interpretations;
    const points = v.data.features.filter((f) => f.geometry?.type === "Point" || f.geometry?.type === "MultiPoint");
    const others: FeatureCollection = { type: "FeatureCollection", features: v.data.features.filter((f) => !points.includes(f)) };
    const pointList = points.flatMap((f) => (f.geometry?.type === "Point" ? [{ f, p: f.geometry.coordinates as [number, number] }] : f.geometry?.type === "MultiPoint" ? f.geometry.coordinates.map((p) => ({ f, p: p as [number, number] })) : []));
    const layers: Layer[] = [
      new GeoJsonLayer({
        id: `${v.id}-shapes`,
        data: others,
        stroked: true,
        filled: true,
        getLineColor: s.line,
        getFillColor: s.fill,
        getLineWidth: s.width,
        lineWidthUnits: "pixels",
        opacity: v.opacity,
      }),
    ];
    if (pointList.length) layers.push(textLayer(`${v.id}-glyphs`, pointList, (d) => d.p, () => s.glyph, { size: v.overlayKind === "cores" ? 14 : 10, colour: s.line, opacity: v.opacity, background: false }));
    if (s.labelled) {
      const labels = [
        ...others.features.map((f) => ({ at: bboxCentre(f.geometry), text: featureLabel(f) })),
        ...pointList.map((d) => ({ at: d.p, text: featureLabel(d.f), point: true })),
      ].filter((l): l is { at: [number, number]; text: string; point?: boolean } => !!l.at && !!l.text);
      if (labels.length) layers.push(textLayer(`${v.id}-labels`, labels, (d) => d.at, (d) => d.text, { size: 11, opacity: v.opacity, anchor: pointList.length ? "start" : "middle" }));
    }
    return layers;
  }
  if (v.type === "sites-exact") {
    return [
      new ScatterplotLayer({
        id: v.id,
        data: v.data,
        getPosition: (d: { x: number; y: number }) => [d.x, d.y],
        getRadius: 5,
        radiusUnits: "pixels",
        stroked: true,
        getFillColor: SAND_50,
        getLineColor: DEEP_900,
        getLineWidth: 2,
        lineWidthUnits: "pixels",
        opacity: v.opacity,
      }),
      textLayer(`${v.id}-labels`, v.data, (d) => [d.x, d.y], (d) => d.label, { size: 11, opacity: v.opacity, anchor: "start" }),
    ];
  }
  const half = v.cellSizeM / 2;
  return [
    new PolygonLayer({
      id: v.id,
      data: v.data,
      getPolygon: (d: { x: number; y: number }) => [[d.x - half, d.y - half], [d.x + half, d.y - half], [d.x + half, d.y + half], [d.x - half, d.y + half]],
      stroked: true,
      filled: true,
      getFillColor: [251, 248, 242, 50],
      getLineColor: SAND_50,
      getLineWidth: 1,
      lineWidthUnits: "pixels",
      opacity: v.opacity,
    }),
    textLayer(`${v.id}-counts`, v.data, (d) => [d.x, d.y], (d) => String(d.count), { size: 12, opacity: v.opacity }),
  ];
}

export default function DeckMap(props: DeckMapProps) {
  const { extentM, rasters, vectors, section, crosshair, onHover, onClick, onAfterRender, fitSignal, frameTag } = props;
  const deckRef = useRef<DeckGLRef>(null);
  useEffect(() => {
    deckRef.current?.deck?.redraw(`frame ${frameTag}`);
  }, [frameTag]);
  const boxRef = useRef<HTMLDivElement>(null);
  const [size, setSize] = useState<{ w: number; h: number } | null>(null);
  useLayoutEffect(() => {
    const el = boxRef.current;
    if (!el) return;
    const measure = () => setSize((s) => (s && s.w === el.clientWidth && s.h === el.clientHeight ? s : { w: el.clientWidth, h: el.clientHeight }));
    measure();
    const ro = new ResizeObserver(measure);
    ro.observe(el);
    return () => ro.disconnect();
  }, []);

  const view = useMemo(() => new OrthographicView({ id: "plan", flipY: false, controller: true }), []);
  // Fit the grid once the box is measured, and again when asked ("Whole grid").
  const [fitted, setFitted] = useState<{ signal: number; vs: { target: [number, number, number]; zoom: number } } | null>(null);
  useEffect(() => {
    if (!size || size.w === 0 || size.h === 0) return;
    if (fitted && fitted.signal === fitSignal) return;
    const zoom = Math.log2(Math.min(size.w / extentM.width, size.h / extentM.height) * 0.94);
    setFitted({ signal: fitSignal, vs: { target: [extentM.width / 2, -extentM.height / 2, 0], zoom } });
  }, [size, fitSignal, extentM.width, extentM.height, fitted]);

  const layers = useMemo(() => {
    const bounds: [number, number, number, number] = [0, -extentM.height, extentM.width, 0];
    const list: Layer[] = rasters.map(
      (r) =>
        new BitmapLayer({
          id: `raster-${r.id}`,
          image: r.image,
          bounds,
          opacity: r.opacity,
          textureParameters: r.nearest ? { minFilter: "nearest", magFilter: "nearest" } : { minFilter: "linear", magFilter: "linear" },
        }),
    );
    for (const v of vectors) list.push(...vectorLayers(v));
    if (section.length) {
      list.push(
        new PathLayer({ id: "section-line", data: section.length === 2 ? [section] : [], getPath: (d: Array<[number, number]>) => d, getColor: SAND_50, getWidth: 2, widthUnits: "pixels" }),
        new ScatterplotLayer({ id: "section-ends", data: section, getPosition: (d: [number, number]) => d, getRadius: 4, radiusUnits: "pixels", getFillColor: SAND_50, stroked: true, getLineColor: DEEP_900, lineWidthUnits: "pixels", getLineWidth: 1.5 }),
        textLayer("section-ends-labels", section.map((p, i) => ({ p, t: i === 0 ? "A" : "B" })), (d) => d.p, (d) => d.t, { size: 12, opacity: 1, anchor: "start" }),
      );
    }
    return list;
  }, [rasters, vectors, section, extentM.width, extentM.height]);

  return (
    <div ref={boxRef} className="absolute inset-0">
      {size && fitted ? (
        <DeckGL
          key={fitted.signal}
          ref={deckRef}
          views={view}
          initialViewState={fitted.vs}
          controller={{ doubleClickZoom: false }}
          layers={layers}
          width={size.w}
          height={size.h}
          getCursor={({ isDragging }) => (isDragging ? "grabbing" : crosshair ? "crosshair" : "default")}
          onHover={(info: PickingInfo) => onHover(info.coordinate ? [info.coordinate[0], info.coordinate[1]] : null)}
          onClick={(info: PickingInfo) => {
            if (info.coordinate) onClick([info.coordinate[0], info.coordinate[1]]);
          }}
          onAfterRender={onAfterRender}
        />
      ) : null}
    </div>
  );
}
