// One weight set beside the map: move a weight or drag a curve's handle and the potential on the map
// follows at once (the display grid re-scored in a Web Worker with the scoring job's own code); save
// a version with a reason, look back through the history and restore, compare with another set,
// adopt (leads), and score at full resolution for the GeoTIFF.
import { useQuery } from "@tanstack/react-query";
import { useCallback, useEffect, useMemo, useState } from "react";
import { Link, useRevalidator } from "react-router";
import { requireProjectAccess } from "~/permissions.server";
import { can } from "~/permissions";
import { refusal } from "~/security.server";
import { getWeightSet, listWeightSets } from "~/weight-sets.server";
import { listScorings, scoringView } from "~/scorings.server";
import { mapPayload } from "~/map.server";
import { formatUtc } from "~/format";
import { MapWorkspace } from "~/components/map/MapWorkspace";
import { rasterQuery } from "~/components/map/queries";
import { potentialOverlay, potentialText } from "~/components/scoring/potential-view";
import { scaleGradient, divergingGradient } from "~/components/map/colour-scales";
import type { MapData } from "~/components/map/types";
import { Cautions } from "~/components/Cautions";
import { CurveEditor, displayHistogram, reshape, shapeOf, SHAPE_WORDS, type CurveShape } from "~/components/scoring/CurveEditor";
import { AhpPanel } from "~/components/scoring/AhpPanel";
import { useLiveScoring, type Correlations } from "~/components/scoring/useLiveScoring";
import { factorDef, type FactorId } from "~/scoring/factors";
import type { ScoreTarget } from "~/scoring/scoring-inputs";
import { evidenceFromOverlays } from "~/components/scoring/evidence";
import type { PeriodSetting, WeightSetContent } from "~/scoring/weight-set";
import type { FactorCurve } from "~/scoring/factor-curves";
import type { Route } from "./+types/project-weight-set";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.set.name ?? "Weight set"} · Weights · Lowstand` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "project.read");
  const id = /^\d{1,9}$/.test(params.weightSetId ?? "") ? Number(params.weightSetId) : null;
  const set = id === null ? null : await getWeightSet(id, { projectId: project.id });
  if (!set) throw refusal(request, 404, "no_such_weight_set", "There is no such weight set in this project.");
  const requested = new URL(request.url).searchParams.get("reconstruction");
  const [sets, map, scorings] = await Promise.all([listWeightSets(project.id), mapPayload(project, { userId: identity.user.id, role }, requested), listScorings(project.id)]);
  const versionIds = new Set(set.history.map((h) => h.id));
  return {
    projectId: project.id,
    set,
    others: sets.map((s) => ({ id: s.id, name: s.name, currentVersion: s.currentVersion })),
    map: map as unknown as MapData,
    mayEdit: can(role, "weights.edit"),
    mayAdopt: can(role, "weights.adopt"),
    mayScore: can(role, "runs.start"),
    scorings: scorings.filter((s) => versionIds.has(s.weightSetVersionId)).slice(0, 12).map(scoringView),
  };
}

async function problemOf(res: Response): Promise<string> {
  try {
    const body = (await res.json()) as { error?: { message?: string } };
    return body.error?.message ?? `The request failed (${res.status}).`;
  } catch {
    return `The request failed (${res.status}).`;
  }
}

async function sendJson(url: string, method: string, body: unknown) {
  return fetch(url, { method, headers: { "Content-Type": "application/json", Accept: "application/json" }, body: JSON.stringify(body) });
}

const same = (a: unknown, b: unknown) => JSON.stringify(a) === JSON.stringify(b);

export default function WeightSetPage({ loaderData }: Route.ComponentProps) {
  const { projectId, set, map, mayEdit } = loaderData;
  const r = map.reconstruction;
  if (!r) {
    return (
      <div className="max-w-3xl space-y-3">
        <h1 className="text-2xl font-semibold">{set.name}</h1>
        <p className="text-sm">
          The potential is scored on a reconstructed landscape: <Link className="underline" to={`/projects/${projectId}/reconstructions`}>reconstruct one first</Link>. The weights can be edited once a map exists.
        </p>
      </div>
    );
  }
  return <Workbench key={`${set.id}:${set.version.version}`} data={loaderData} reconstruction={r} mayEdit={mayEdit} />;
}

type LoaderData = Route.ComponentProps["loaderData"];
type Reconstruction = NonNullable<MapData["reconstruction"]>;

function Workbench({ data, reconstruction: r, mayEdit }: { data: LoaderData; reconstruction: Reconstruction; mayEdit: boolean }) {
  const { projectId, set, map } = data;
  const revalidator = useRevalidator();
  const saved = set.version.content as WeightSetContent;
  const [content, setContent] = useState<WeightSetContent>(() => structuredClone(saved));
  const [ageKa, setAgeKa] = useState(r.agesKa[0]);
  const [periodName, setPeriodName] = useState<string>("");
  const [open, setOpen] = useState<FactorId | null>(null);
  const [compare, setCompare] = useState<{ label: string; content: WeightSetContent } | null>(null);
  const dirty = !same(content, saved);

  const period = content.periods.find((p) => p.name === periodName) ?? null;
  const target: ScoreTarget = useMemo(() => (period ? { kind: "period", period } : { kind: "age", ageKa }), [period, ageKa]);
  const evidence = useMemo(() => evidenceFromOverlays(map.overlays), [map.overlays]);
  const compareArg = useMemo(() => (compare ? { content: compare.content, topN: 2000 } : null), [compare]);
  const live = useLiveScoring({ reconstruction: r, content, target, evidence, compare: compareArg });

  const overlay = useMemo(() => potentialOverlay(live.result, 0.9, `${compare ? "diff:" : ""}${live.result?.checksum ?? ""}`), [live.result]);
  const extraReadout = useCallback(
    (col: number, row: number) => {
      const text = potentialText(live.result, col, row);
      return text === null ? [] : [{ label: compare ? "Potential (this set)" : "Potential", text }];
    },
    [live.result, compare],
  );

  const setFactor = (id: FactorId, patch: Partial<{ weight: number; curve: FactorCurve }>) => setContent((c) => ({ ...c, factors: c.factors.map((f) => (f.factor === id ? { ...f, ...patch } : f)) }));
  const total = content.factors.reduce((s, f) => s + (f.weight > 0 ? f.weight : 0), 0);
  const haveLayers = useMemo(() => new Set(r.layers.map((l) => l.name)), [r.layers]);

  const panel = (
    <div className="space-y-3 text-sm" data-testid="weighing-panel">
      <div>
        <h2 className="text-base font-semibold leading-tight">
          {set.name} <span className="text-sm font-normal text-sediment-600">v{set.version.version}</span>
          {set.adopted ? <span className="ml-2 rounded-sm bg-ember-100 px-1 text-xs font-normal text-ember-900">adopted v{set.adopted.version}</span> : null}
        </h2>
        {dirty ? <p className="text-xs text-ember-800" data-testid="unsaved">Changed since v{set.version.version} — not saved.</p> : null}
        {!mayEdit ? <p className="text-xs text-sediment-600">You can look and try nothing here: weights are edited by analysts and leads.</p> : null}
      </div>

      <LiveStatus live={live} compare={compare} />

      <label className="flex items-center gap-2 text-xs">
        Score
        <select value={periodName} onChange={(e) => setPeriodName(e.target.value)} className="rounded-sm border border-sand-300 bg-white px-1 py-0.5" aria-label="Score at an age or over a period">
          <option value="">at the age on the strip ({ageKa} ka)</option>
          {content.periods.map((p) => (
            <option key={p.name} value={p.name}>
              over {p.name} ({p.youngKa}–{p.oldKa} ka)
            </option>
          ))}
        </select>
      </label>

      <Section title="Factors and weights" defaultOpen>
        <ul className="space-y-1" data-testid="factor-list">
          {content.factors.map((f) => {
            const def = factorDef(f.factor)!;
            const present = f.factor === "shelter" || haveLayers.has(def.layer);
            const share = f.weight > 0 && total > 0 ? (100 * f.weight) / total : 0;
            return (
              <li key={f.factor} className="rounded-sm border border-sand-200 bg-white px-2 py-1">
                <div className="flex items-center gap-2">
                  <button type="button" className="min-w-0 flex-1 truncate text-left text-xs font-semibold" aria-expanded={open === f.factor} onClick={() => setOpen(open === f.factor ? null : f.factor)} title={def.description}>
                    {open === f.factor ? "▾" : "▸"} {def.label}
                  </button>
                  <input
                    type="range"
                    min={0}
                    max={10}
                    step={0.5}
                    value={f.weight}
                    disabled={!mayEdit}
                    aria-label={`Weight of ${def.label}`}
                    data-factor={f.factor}
                    onChange={(e) => setFactor(f.factor, { weight: Number(e.target.value) })}
                    className="w-24 accent-[var(--color-ember-500)]"
                  />
                  <span className="w-12 text-right text-xs tabular-nums" aria-label={`Share of ${def.label}`}>{share ? `${share.toFixed(0)} %` : "off"}</span>
                </div>
                {!present ? <p className={`text-[11px] ${f.weight > 0 ? "text-caution-800" : "text-sediment-600"}`}>This reconstruction has no {def.layer.replace(/_/g, " ")} layer{f.weight > 0 ? ": the factor is left out." : "."}</p> : null}
                {open === f.factor ? (
                  <FactorCurvePanel reconstruction={r} factor={f.factor} ageKa={ageKa} curve={f.curve} editable={mayEdit} onChange={(curve) => setFactor(f.factor, { curve })} />
                ) : null}
              </li>
            );
          })}
        </ul>
        <p className="mt-1 text-[11px] text-sediment-600">Weights are relative: the shares (normalised to 100 %) are what count.</p>
      </Section>

      <Section title="Preservation">
        <PreservationPanel content={content} setContent={setContent} editable={mayEdit} status={live.result?.preservation ?? null} />
      </Section>

      <Section title="Periods">
        <PeriodsPanel periods={content.periods} agesKa={r.agesKa} editable={mayEdit} onChange={(periods) => setContent((c) => ({ ...c, periods }))} />
      </Section>

      <Section title="Pairwise judgements (AHP)">
        <AhpPanel key={content.factors.map((f) => f.factor).join()} content={content} editable={mayEdit} onApply={setContent} />
      </Section>

      <Section title="Factor overlap">
        <CorrelationPanel live={live} content={content} ageKa={period ? r.agesKa[0] : ageKa} />
      </Section>

      <Section title="Compare">
        <ComparePanel others={data.others} current={set.id} compare={compare} setCompare={setCompare} result={live.result} />
      </Section>

      <Section title="Versions" defaultOpen={mayEdit}>
        <VersionsPanel data={data} content={content} dirty={dirty} onSaved={() => revalidator.revalidate()} onReset={() => setContent(structuredClone(saved))} />
      </Section>

      <Section title="Full resolution">
        <FullScoringPanel data={data} reconstructionId={r.id} target={target} dirty={dirty} />
      </Section>

      <Cautions compact />
    </div>
  );

  return (
    <div className="-mx-8 -my-6 flex h-[calc(100vh-2.75rem)] flex-col" data-testid="weighing-page">
      <MapWorkspace
        data={map}
        reconstruction={r}
        extras={{ title: "Weights", workPanel: { label: "Weights", content: panel }, overlay, extraReadout, onAgeChange: setAgeKa, initialVisibility: { land_class: false } }}
      />
    </div>
  );
}

function Section({ title, defaultOpen = false, children }: { title: string; defaultOpen?: boolean; children: React.ReactNode }) {
  return (
    <details open={defaultOpen} className="rounded-sm border border-sand-200 bg-sand-100/60 px-2 py-1">
      <summary className="cursor-pointer text-sm font-semibold">{title}</summary>
      <div className="mt-2">{children}</div>
    </details>
  );
}

function LiveStatus({ live, compare }: { live: ReturnType<typeof useLiveScoring>; compare: { label: string } | null }) {
  const res = live.result;
  const pct = (n: number, d: number) => (d ? `${((100 * n) / d).toFixed(1)} %` : "—");
  return (
    <div className="rounded-sm border-l-4 border-deep-600 bg-white px-2 py-1 text-xs" aria-live="polite" data-testid="live-status" data-checksum={res?.checksum ?? ""}>
      {live.error ? (
        <p role="alert" className="text-caution-800">{live.error}</p>
      ) : live.loading > 0 ? (
        <p>Loading {live.loading} layer{live.loading === 1 ? "" : "s"} for live scoring…</p>
      ) : !res ? (
        <p>Scoring…</p>
      ) : (
        <>
          <div className="flex items-center gap-2">
            <span className="inline-block h-2 w-24 rounded-sm" style={{ background: compare ? divergingGradient() : scaleGradient("viridis") }} aria-hidden="true" />
            <span>{compare ? `this set − ${compare.label} (−0.5 … +0.5)` : "potential 0 … 1"}</span>
            {!compare && res.preservation.active ? <span className="ml-1 inline-block h-2 w-4 border border-sediment-400 bg-[repeating-linear-gradient(45deg,#787878_0_2px,#e1ded7_2px_5px)]" title="unassessed" aria-hidden="true" /> : null}
          </div>
          <p className="tabular-nums">
            mean {res.stats.mean === null ? "—" : res.stats.mean.toFixed(3)} · ≥ 0.5 on {pct(res.stats.high, res.stats.occupiable)} of the land
            {res.preservation.active ? ` · unassessed ${pct(res.stats.unassessed, res.stats.occupiable)}` : ""} · re-scored in {res.ms.toFixed(0)} ms{live.busy ? " …" : ""}
          </p>
          <p className="text-sediment-600">{res.preservation.reason}</p>
          {res.notes.length ? (
            <ul className="list-disc pl-4 text-sediment-700">
              {res.notes.map((n) => (
                <li key={n}>{n}</li>
              ))}
            </ul>
          ) : null}
        </>
      )}
    </div>
  );
}

function FactorCurvePanel({ reconstruction: r, factor, ageKa, curve, editable, onChange }: { reconstruction: Reconstruction; factor: FactorId; ageKa: number; curve: FactorCurve; editable: boolean; onChange: (c: FactorCurve) => void }) {
  const def = factorDef(factor)!;
  const layerAge = def.perAge ? ageKa : null;
  const hasLayer = factor !== "shelter" && r.layers.some((l) => l.name === def.layer && (l.ageKa ?? null) === layerAge);
  const layer = useQuery({ ...rasterQuery(r.id, def.layer, layerAge), enabled: hasLayer });
  const lc = useQuery(rasterQuery(r.id, "land_class", ageKa));
  const histogram = useMemo(() => {
    if (!layer.data || !lc.data) return null;
    const mask = new Uint8Array(lc.data.codes.length);
    for (let i = 0; i < mask.length; i++) {
      const code = lc.data.codes[i];
      if (code === lc.data.nodataCode) continue;
      const cls = Math.round(code * lc.data.scale + lc.data.offset);
      mask[i] = cls === 0 || cls === 2 ? 1 : 0;
    }
    return displayHistogram(layer.data.codes, layer.data.scale, layer.data.offset, layer.data.nodataCode, mask);
  }, [layer.data, lc.data]);
  const shapes = (Object.keys(SHAPE_WORDS) as CurveShape[]).filter((s) => (factor === "aspect" ? s === "aspect" : s !== "aspect"));
  const lo = histogram?.edges[0] ?? 0;
  const hi = histogram?.edges[histogram.edges.length - 1] ?? 1;
  return (
    <div className="mt-1 border-t border-sand-200 pt-1">
      <p className="text-[11px] text-sediment-600">{def.description}</p>
      <label className="mt-1 flex items-center gap-1 text-xs">
        Curve
        <select disabled={!editable} value={shapeOf(curve)} onChange={(e) => onChange(reshape(e.target.value as CurveShape, lo, hi))} className="rounded-sm border border-sand-300 bg-white px-1 py-0.5" aria-label={`Curve shape of ${def.label}`}>
          {shapes.map((s) => (
            <option key={s} value={s}>
              {SHAPE_WORDS[s]}
            </option>
          ))}
        </select>
      </label>
      <CurveEditor curve={curve} onChange={onChange} histogram={histogram} units={def.units} label={def.label} editable={editable} />
    </div>
  );
}

function PreservationPanel({ content, setContent, editable, status }: { content: WeightSetContent; setContent: (f: (c: WeightSetContent) => WeightSetContent) => void; editable: boolean; status: { active: boolean; reason: string } | null }) {
  const p = content.preservation;
  const set = (patch: Partial<WeightSetContent["preservation"]>) => setContent((c) => ({ ...c, preservation: { ...c.preservation, ...patch } }));
  const num = (label: string, value: number, onValue: (v: number) => void, opts: { min?: number; step?: number; unit?: string } = {}) => (
    <label className="flex items-center justify-between gap-2 text-xs">
      <span>{label}</span>
      <span>
        <input
          type="number"
          disabled={!editable}
          min={opts.min ?? 0}
          step={opts.step ?? "any"}
          defaultValue={value}
          onBlur={(e) => {
            const v = Number(e.target.value);
            if (Number.isFinite(v) && v >= (opts.min ?? 0)) onValue(v);
            else e.target.value = String(value);
          }}
          className="w-20 rounded-sm border border-sand-300 bg-white px-1 py-0.5 text-right tabular-nums"
        />{" "}
        {opts.unit ?? ""}
      </span>
    </label>
  );
  return (
    <div className="space-y-2" data-testid="preservation-panel">
      <p className="text-xs text-sediment-700">
        Would traces survive and be reachable? A separate model multiplied into the potential: low ground below the local base level keeps old surfaces; a slow rise leaves the surface longer in the surf zone; sheltered coasts erode
        less; cores and interpretations that show the horizon intact or truncated override the model nearby. Cells without horizon data stay <em>unassessed</em> — hatched, never low.
      </p>
      <label className="flex items-center gap-2 text-xs font-semibold">
        <input type="checkbox" disabled={!editable} checked={p.enabled} onChange={(e) => set({ enabled: e.target.checked })} /> Multiply preservation in
      </label>
      {status ? <p className={`text-xs ${status.active ? "text-sediment-700" : "text-ember-800"}`} data-testid="preservation-status">{status.reason}</p> : null}
      {num("Weight: below local base level", p.baseLevel.weight, (v) => set({ baseLevel: { ...p.baseLevel, weight: v } }), { step: 0.5 })}
      {num("Weight: shoreface erosion", p.shorefaceErosion.weight, (v) => set({ shorefaceErosion: { ...p.shorefaceErosion, weight: v } }), { step: 0.5 })}
      {num("Erosion depth", p.shorefaceErosion.erosionDepthM, (v) => v > 0 && set({ shorefaceErosion: { ...p.shorefaceErosion, erosionDepthM: v } }), { unit: "m", step: 1 })}
      {num("Weight: shelter when drowned", p.shelter.weight, (v) => set({ shelter: { ...p.shelter, weight: v } }), { step: 0.5 })}
      {num("Evidence reaches", p.evidenceRadiusM, (v) => set({ evidenceRadiusM: v }), { unit: "m", step: 50 })}
      {num("Shelter looks around", content.shelterRadiusM, (v) => v > 0 && setContent((c) => ({ ...c, shelterRadiusM: v })), { unit: "m", step: 100 })}
    </div>
  );
}

function PeriodsPanel({ periods, agesKa, editable, onChange }: { periods: PeriodSetting[]; agesKa: number[]; editable: boolean; onChange: (p: PeriodSetting[]) => void }) {
  const [problem, setProblem] = useState<string | null>(null);
  return (
    <div className="space-y-2 text-xs" data-testid="periods-panel">
      <p className="text-sediment-700">
        A period is an age window for a cultural phase. Inside it, each reconstructed age counts for the stretch of time nearest to it (halfway to its neighbours), and a cell&apos;s score is the time-weighted mean of its
        scores at those ages — ages when the cell was sea or lake count as 0 (“zero”) or are left out (“skip”). Reconstructed ages: {agesKa.join(", ")} ka.
      </p>
      {periods.length ? (
        <table className="w-full tabular-nums">
          <thead className="text-left text-sediment-600">
            <tr><th>Name</th><th>Young</th><th>Old</th><th>Sea/lake ages</th><th /></tr>
          </thead>
          <tbody>
            {periods.map((p, i) => (
              <tr key={p.name}>
                <td>{p.name}</td>
                <td>{p.youngKa} ka</td>
                <td>{p.oldKa} ka</td>
                <td>{p.rule === "zero" ? "count as 0" : "left out"}</td>
                <td>{editable ? <button type="button" className="underline" onClick={() => onChange(periods.filter((_, q) => q !== i))}>remove</button> : null}</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : (
        <p className="text-sediment-600">No periods yet: the map scores one age at a time.</p>
      )}
      {editable ? (
        <form
          className="flex flex-wrap items-end gap-1"
          onSubmit={(e) => {
            e.preventDefault();
            const f = new FormData(e.currentTarget);
            const p: PeriodSetting = { name: String(f.get("name") ?? "").trim(), youngKa: Number(f.get("young")), oldKa: Number(f.get("old")), rule: f.get("rule") === "skip" ? "skip" : "zero" };
            if (!p.name) return setProblem("Give the period a name.");
            if (periods.some((x) => x.name === p.name)) return setProblem(`There is already a period called "${p.name}".`);
            if (!Number.isFinite(p.youngKa) || !Number.isFinite(p.oldKa) || !(p.youngKa < p.oldKa)) return setProblem("The young end must be a smaller age (ka BP) than the old end.");
            setProblem(null);
            onChange([...periods, p]);
            e.currentTarget.reset();
          }}
        >
          <input name="name" placeholder="name" aria-label="Period name" maxLength={80} className="w-28 rounded-sm border border-sand-300 px-1 py-0.5" />
          <input name="young" type="number" step="any" placeholder="young ka" aria-label="Young end (ka BP)" className="w-16 rounded-sm border border-sand-300 px-1 py-0.5" />
          <input name="old" type="number" step="any" placeholder="old ka" aria-label="Old end (ka BP)" className="w-16 rounded-sm border border-sand-300 px-1 py-0.5" />
          <select name="rule" aria-label="Ages when a cell was sea or lake" className="rounded-sm border border-sand-300 px-1 py-0.5">
            <option value="zero">sea/lake ages count 0</option>
            <option value="skip">sea/lake ages left out</option>
          </select>
          <button type="submit" className="rounded-sm border border-sand-300 bg-white px-2 py-0.5">Add</button>
        </form>
      ) : null}
      {problem ? <p role="alert" className="text-caution-800">{problem}</p> : null}
    </div>
  );
}

function CorrelationPanel({ live, content, ageKa }: { live: ReturnType<typeof useLiveScoring>; content: WeightSetContent; ageKa: number }) {
  const [table, setTable] = useState<Correlations | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const factors = content.factors.filter((f) => f.weight > 0).map((f) => f.factor);
  const run = () => {
    setProblem(null);
    live.correlate(ageKa, factors, content.shelterRadiusM).then(setTable, (e: Error) => setProblem(e.message));
  };
  const short = (id: FactorId) => factorDef(id)?.label.replace(/^Distance to (a |the )?/, "→ ") ?? id;
  return (
    <div className="space-y-2 text-xs" data-testid="correlation-panel">
      <p className="text-sediment-700">How strongly the weighted factors move together on the land at {ageKa} ka (Spearman&apos;s ρ). Two factors above about 0.7 largely say the same thing: weighting both counts it twice.</p>
      <button type="button" onClick={run} disabled={live.loading > 0 || factors.length < 2} className="rounded-sm border border-sand-300 bg-white px-2 py-0.5">
        Work out the overlap
      </button>
      {problem ? <p role="alert" className="text-caution-800">{problem}</p> : null}
      {table ? (
        <div className="overflow-x-auto">
          <table className="tabular-nums">
            <thead>
              <tr>
                <th />
                {table.factors.map((f) => (
                  <th key={f} className="px-1 text-[10px] font-normal">{short(f)}</th>
                ))}
              </tr>
            </thead>
            <tbody>
              {table.factors.map((f, i) => (
                <tr key={f}>
                  <th className="pr-1 text-left text-[10px] font-normal">{short(f)}</th>
                  {table.spearman[i].map((v, j) => (
                    <td key={j} className={`px-1 text-center ${i !== j && Math.abs(v) >= 0.7 ? "font-semibold text-caution-800" : ""}`}>{i === j ? "·" : Number.isFinite(v) ? v.toFixed(2) : "—"}</td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
          <p className="text-sediment-600">From {table.samples.toLocaleString("en")} cells sampled at random.</p>
        </div>
      ) : null}
    </div>
  );
}

function ComparePanel({ others, current, compare, setCompare, result }: { others: LoaderData["others"]; current: number; compare: { label: string } | null; setCompare: (c: { label: string; content: WeightSetContent } | null) => void; result: ReturnType<typeof useLiveScoring>["result"] }) {
  const [problem, setProblem] = useState<string | null>(null);
  const [choice, setChoice] = useState("");
  const load = async (value: string) => {
    setChoice(value);
    setProblem(null);
    if (!value) return setCompare(null);
    const [id, version] = value.split(":");
    const res = await fetch(`/api/weight-sets/${id}?version=${version}`, { headers: { Accept: "application/json" } });
    if (!res.ok) return setProblem(await problemOf(res));
    const { weightSet } = (await res.json()) as { weightSet: { name: string; version: { version: number; content: WeightSetContent } } };
    setCompare({ label: `${weightSet.name} v${weightSet.version.version}`, content: weightSet.version.content });
  };
  const options: Array<{ value: string; label: string }> = [];
  for (const o of others) for (let v = o.currentVersion; v >= 1 && v > o.currentVersion - 5; v--) options.push({ value: `${o.id}:${v}`, label: `${o.name} v${v}${o.id === current ? " (this set)" : ""}` });
  const c = result?.compare ?? null;
  return (
    <div className="space-y-2 text-xs" data-testid="compare-panel">
      <p className="text-sediment-700">Compare the weights on screen with another set or an earlier version: the map shows the difference, and the figures say how alike the two rankings are.</p>
      <select value={choice} onChange={(e) => void load(e.target.value)} aria-label="Compare with" className="w-full rounded-sm border border-sand-300 bg-white px-1 py-0.5">
        <option value="">— no comparison (show the potential) —</option>
        {options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
      {problem ? <p role="alert" className="text-caution-800">{problem}</p> : null}
      {compare && c ? (
        <dl className="grid grid-cols-[auto_1fr] gap-x-2 tabular-nums" data-testid="compare-figures">
          <dt>Spearman&apos;s ρ</dt>
          <dd>{c.spearman === null || !Number.isFinite(c.spearman) ? "—" : c.spearman.toFixed(3)}</dd>
          <dt>Top {c.topN.toLocaleString("en")} cells in common</dt>
          <dd>{c.topShare === null ? "—" : `${(100 * c.topShare).toFixed(1)} %`}</dd>
          <dt>Mean difference</dt>
          <dd>{c.meanDifference === null ? "—" : c.meanDifference.toFixed(3)}</dd>
        </dl>
      ) : null}
    </div>
  );
}

function VersionsPanel({ data, content, dirty, onSaved, onReset }: { data: LoaderData; content: WeightSetContent; dirty: boolean; onSaved: () => void; onReset: () => void }) {
  const { set, projectId, mayEdit, mayAdopt } = data;
  const [note, setNote] = useState("");
  const [problem, setProblem] = useState<string | null>(null);
  const [done, setDone] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const [rationale, setRationale] = useState("");
  const act = async (run: () => Promise<Response>, success: string) => {
    setBusy(true);
    setProblem(null);
    setDone(null);
    const res = await run();
    setBusy(false);
    if (!res.ok) return setProblem(await problemOf(res));
    setDone(success);
    onSaved();
  };
  return (
    <div className="space-y-2 text-xs" data-testid="versions-panel">
      {mayEdit ? (
        <form
          className="space-y-1"
          onSubmit={(e) => {
            e.preventDefault();
            void act(() => sendJson(`/api/weight-sets/${set.id}`, "PATCH", { version: set.version.version, content, note }), "Saved as a new version.");
            setNote("");
          }}
        >
          <label className="flex flex-col">
            Why (kept with the version)
            <input value={note} onChange={(e) => setNote(e.target.value)} maxLength={500} className="rounded-sm border border-sand-300 bg-white px-1 py-0.5" placeholder="e.g. river mouths up after the core results" />
          </label>
          <div className="flex gap-2">
            <button type="submit" disabled={!dirty || busy} className="rounded-sm border border-deep-700 bg-deep-800 px-2 py-1 text-sand-50 disabled:opacity-40">
              Save as v{set.currentVersion + 1}
            </button>
            <button type="button" disabled={!dirty || busy} onClick={onReset} className="rounded-sm border border-sand-300 bg-white px-2 py-1 disabled:opacity-40">
              Undo changes
            </button>
          </div>
        </form>
      ) : null}
      {problem ? <p role="alert" className="text-caution-800">{problem}</p> : null}
      {done ? <p role="status" className="text-deep-800">{done}</p> : null}
      <ol className="space-y-1" data-testid="version-history">
        {set.history.map((h) => (
          <li key={h.id} className="border-t border-sand-200 pt-1">
            <span className="font-semibold">v{h.version}</span> · {formatUtc(h.createdAt)} · {h.createdBy?.name ?? "—"}
            {set.adopted?.versionId === h.id ? <span className="ml-1 rounded-sm bg-ember-100 px-1 text-ember-900">adopted</span> : null}
            {h.note ? <div className="text-sediment-700">“{h.note}”</div> : null}
            <div className="flex gap-2">
              {mayEdit && h.version !== set.currentVersion ? (
                <button type="button" disabled={busy} className="underline" onClick={() => void act(() => sendJson(`/api/weight-sets/${set.id}/restore`, "POST", { version: h.version, expectedVersion: set.currentVersion }), `Version ${h.version} restored as a new version.`)}>
                  restore
                </button>
              ) : null}
            </div>
          </li>
        ))}
      </ol>
      {mayAdopt ? (
        <form
          className="space-y-1 rounded-sm border border-ember-300 bg-white p-2"
          onSubmit={(e) => {
            e.preventDefault();
            void act(() => sendJson(`/api/projects/${projectId}/weight-sets/adopted`, "POST", { versionId: set.version.id, rationale }), `v${set.version.version} is now the project's adopted weight set.`);
          }}
        >
          <p className="font-semibold">Adopt v{set.version.version} for the project</p>
          {dirty ? <p className="text-ember-800">Unsaved changes are not part of v{set.version.version}: save first to adopt them.</p> : null}
          <label className="flex flex-col">
            Rationale (recorded in the audit log)
            <textarea required value={rationale} onChange={(e) => setRationale(e.target.value)} maxLength={1000} rows={2} className="rounded-sm border border-sand-300 px-1 py-0.5" />
          </label>
          <button type="submit" disabled={busy || !rationale.trim()} className="rounded-sm border border-ember-700 bg-ember-600 px-2 py-1 text-white disabled:opacity-40">
            Adopt
          </button>
        </form>
      ) : null}
    </div>
  );
}

type ScoringView = LoaderData["scorings"][number];

function FullScoringPanel({ data, reconstructionId, target, dirty }: { data: LoaderData; reconstructionId: number; target: ScoreTarget; dirty: boolean }) {
  const { projectId, set, mayScore } = data;
  const [runs, setRuns] = useState<ScoringView[]>(data.scorings);
  const [problem, setProblem] = useState<string | null>(null);
  const running = runs.filter((s) => s.status === "running");
  useEffect(() => {
    if (!running.length) return;
    const t = setInterval(async () => {
      const next = await Promise.all(runs.map(async (s) => (s.status === "running" ? (((await (await fetch(`/api/scorings/${s.id}`)).json()) as { scoring: ScoringView }).scoring) : s)));
      setRuns(next);
    }, 1500);
    return () => clearInterval(t);
  }, [running.length, runs]);
  const start = async () => {
    setProblem(null);
    const body = { reconstructionId, weightSetVersionId: set.version.id, target: target.kind === "age" ? { kind: "age", ageKa: target.ageKa } : { kind: "period", name: target.period.name } };
    const res = await sendJson(`/api/projects/${projectId}/scorings`, "POST", body);
    if (!res.ok) return setProblem(await problemOf(res));
    const { scoring } = (await res.json()) as { scoring: { id: number } };
    const view = ((await (await fetch(`/api/scorings/${scoring.id}`)).json()) as { scoring: ScoringView }).scoring;
    setRuns((rs) => [view, ...rs.filter((x) => x.id !== view.id)]);
  };
  return (
    <div className="space-y-2 text-xs" data-testid="full-scoring">
      <p className="text-sediment-700">The map above scores the display copy. For the potential at full resolution, its statistics and the GeoTIFF, run a scoring of the saved version.</p>
      {mayScore ? (
        <button type="button" onClick={() => void start()} className="rounded-sm border border-deep-700 bg-deep-800 px-2 py-1 text-sand-50">
          Score v{set.version.version} {target.kind === "age" ? `at ${target.ageKa} ka` : `over ${target.period.name}`}
        </button>
      ) : null}
      {dirty ? <p className="text-ember-800">The scoring uses the saved v{set.version.version}, not the unsaved changes.</p> : null}
      {problem ? <p role="alert" className="text-caution-800">{problem}</p> : null}
      <ul className="space-y-1" data-testid="scoring-runs">
        {runs.map((s) => (
          <li key={s.id} className="border-t border-sand-200 pt-1" data-status={s.status} data-scoring-id={s.id}>
            <span className="font-semibold">#{s.id}</span> v{s.version.number} · {s.targetLabel} · {s.status}
            {s.status === "running" ? ` ${Math.round(100 * (s.progress ?? 0))} %` : ""}
            {s.error ? <div className="text-caution-800">{s.error}</div> : null}
            {s.downloads.length ? (
              <div className="flex flex-wrap gap-2">
                {s.downloads.map((d) => (
                  <a key={d.name} href={d.href} className="underline" download>
                    {d.name} GeoTIFF
                  </a>
                ))}
              </div>
            ) : null}
          </li>
        ))}
      </ul>
    </div>
  );
}
