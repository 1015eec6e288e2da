// The layer list in the working panel: layers grouped, each with visibility, opacity and a legend
// that gives its values and units. Plain form controls, so the keyboard reaches every one.
import { GROUP_ORDER, fmtValue, type LayerDef } from "./catalogue";
import { rgbCss, scaleGradient } from "./colour-scales";

export interface LayerState {
  visible: boolean;
  opacity: number;
}

export interface LayerStatus {
  loading?: boolean;
  error?: string | null;
  /** value range and units for continuous rasters */
  range?: { min: number; max: number } | null;
  units?: string;
  empty?: boolean;
}

const LINE_SWATCH: Record<string, string> = {
  shoreline: "#fbf8f2",
  streams: "#96b2c6",
  lake_margins: "#6ea0be",
  interpretations: "#cc79a7",
  survey_lines: "#8f877c",
  horizon_picks: "#8f877c",
  cores: "#fbf8f2",
  lease_blocks: "#d6c8ab",
  survey_area: "#bca986",
  dredging_areas: "#8f877c",
  exclusions: "#b3261e",
  development_footprint: "#e8dfcc",
  ocean_boundary: "#7f9db4",
};

export function LayerList({
  defs,
  state,
  status,
  onChange,
}: {
  defs: LayerDef[];
  state: Record<string, LayerState>;
  status: Record<string, LayerStatus>;
  onChange: (id: string, next: LayerState) => void;
}) {
  const groups = GROUP_ORDER.map((g) => ({ g, items: defs.filter((d) => d.group === g) })).filter((x) => x.items.length);
  return (
    <div className="space-y-3" data-testid="layer-list">
      {groups.map(({ g, items }) => (
        <fieldset key={g} className="space-y-1.5">
          <legend className="mb-1 text-xs font-semibold uppercase tracking-wide text-sediment-600">{g}</legend>
          {items.map((d) => {
            const s = state[d.id] ?? { visible: d.visible, opacity: d.opacity };
            const st = status[d.id] ?? {};
            const inputId = `layer-${d.id}`;
            return (
              <div key={d.id} className="rounded-sm border border-sand-200 bg-white px-2 py-1.5">
                <div className="flex items-center gap-2">
                  <input id={inputId} type="checkbox" checked={s.visible} onChange={(e) => onChange(d.id, { ...s, visible: e.target.checked })} className="accent-deep-700" />
                  <label htmlFor={inputId} className="flex-1 text-sm font-medium leading-tight">
                    {d.label}
                  </label>
                  {st.loading && s.visible ? <span className="text-xs text-sediment-600">loading…</span> : null}
                </div>
                {s.visible ? (
                  <div className="mt-1 space-y-1 pl-5">
                    <Legend def={d} status={st} />
                    <label className="flex items-center gap-2 text-xs text-sediment-600">
                      opacity
                      <input
                        type="range"
                        min={0}
                        max={1}
                        step={0.05}
                        value={s.opacity}
                        onChange={(e) => onChange(d.id, { ...s, opacity: Number(e.target.value) })}
                        aria-label={`Opacity of ${d.label}`}
                        className="h-1 flex-1 accent-deep-700"
                      />
                      <span className="w-10 whitespace-nowrap text-right tabular-nums">{Math.round(s.opacity * 100)} %</span>
                    </label>
                  </div>
                ) : null}
                {st.error && s.visible ? <p data-layer-error={d.id} className="mt-1 pl-5 text-xs text-caution-800">{st.error}</p> : null}
              </div>
            );
          })}
        </fieldset>
      ))}
    </div>
  );
}

function Legend({ def, status }: { def: LayerDef; status: LayerStatus }) {
  const note = def.note ? <p className="text-xs text-sediment-600">{def.note}</p> : null;
  if (def.kind === "vector") {
    if (def.source.type === "mask") return status.empty ? <p className="text-xs text-sediment-600">none at this age</p> : note;
    const key = def.source.type === "age" ? def.source.what : def.source.type === "overlay" ? def.source.overlayKind : "sites";
    if (status.empty) return <p className="text-xs text-sediment-600">none at this age</p>;
    if (key === "streams") {
      return (
        <div className="flex items-end gap-2 text-xs text-sediment-600">
          {[1, 2, 3, 4].map((o) => (
            <span key={o} className="flex items-center gap-1">
              <span className="inline-block w-4 rounded-full bg-[#96b2c6]" style={{ height: 0.5 + 0.7 * o }} />
              {o}
            </span>
          ))}
          <span>Strahler order</span>
        </div>
      );
    }
    if (key === "sites") {
      return (
        <div className="text-xs text-sediment-600">
          <p>{def.label.includes("generalised") ? "□ number of sites in the square" : "● known site"}</p>
          {note}
        </div>
      );
    }
    return (
      <div className="flex items-center gap-2 text-xs text-sediment-600">
        <span className="inline-block h-0.5 w-5" style={{ background: LINE_SWATCH[key] ?? "#fbf8f2", outline: "1px solid #183249" }} />
        {note ?? (key === "cores" ? "◆ core" : key === "exclusions" ? "keep out" : null)}
      </div>
    );
  }
  const st = def.style;
  if (st.kind === "grey") return <div className="h-2 w-full rounded-sm" style={{ background: "linear-gradient(to right, #000, #fff)" }} aria-hidden="true" />;
  if (st.kind === "classes") {
    return (
      <ul className="flex flex-wrap gap-x-3 gap-y-0.5 text-xs">
        {st.classes.map((c) => (
          <li key={c.value} className="flex items-center gap-1">
            <span className="inline-block h-3 w-3 rounded-sm border border-sediment-400" style={{ background: rgbCss(c.rgb) }} />
            {c.label}
          </li>
        ))}
      </ul>
    );
  }
  if (st.kind === "mask") {
    return (
      <div className="flex items-center gap-2 text-xs text-sediment-600">
        <span className="inline-block h-3 w-5 rounded-sm border border-sediment-400" style={{ background: `repeating-linear-gradient(45deg, ${rgbCss(st.rgb)} 0 2px, transparent 2px 6px)` }} />
        {def.note}
      </div>
    );
  }
  const r = status.range;
  return (
    <div className="text-xs">
      <div className="h-2 w-full rounded-sm" style={{ background: scaleGradient(st.scale) }} aria-hidden="true" />
      <div className="flex justify-between tabular-nums text-sediment-600">
        <span>{r ? fmtValue(r.min, status.units ?? "") : "—"}</span>
        <span>{r ? fmtValue(r.max, status.units ?? "") : "—"}</span>
      </div>
      {note}
    </div>
  );
}
