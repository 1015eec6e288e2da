// How sure is the potential? A reviewer or analyst runs the Monte Carlo over the weights and the
// landscape (design §7, decision 403) on one age — chosen on the sea-level strip — or one period, for
// a weight-set version (the adopted one by default), and reads the tornado of one-at-a-time
// sensitivity, the convergence of the robust-high share, and per lease block the shares robustly
// high, contested and robustly low. Viewers read; analysts and above start runs.
import { Form, useActionData, useNavigation, useRevalidator } from "react-router";
import { useEffect, useMemo, useRef, useState } from "react";
import { desc, eq } from "drizzle-orm";
import { requireProjectAccess } from "~/permissions.server";
import { can } from "~/permissions";
import { db } from "~/db.server";
import { reconstructions, seaLevelCurves, weightSets, weightSetVersions } from "~/db/schema";
import { adoptedVersion } from "~/weight-sets.server";
import { listUncertaintyRuns, startUncertainty, uncertaintyView } from "~/uncertainty.server";
import { curveFromRow, pointsOf } from "~/sea-level-curves.server";
import { defaultGlobalCurve } from "~/terrain/sea-level";
import { UserError } from "~/errors";
import { SeaLevelStrip } from "~/components/map/SeaLevelStrip";
import { PrimaryButton } from "~/components/forms/Field";
import type { Manifest } from "~/terrain/reconstruct";
import type { Route } from "./+types/project-uncertainty";

export const meta = () => [{ title: "Uncertainty · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const recs = await db().select().from(reconstructions).where(eq(reconstructions.projectId, project.id)).orderBy(desc(reconstructions.createdAt));
  const published = recs.filter((r) => r.status === "published" && r.manifest);
  const rec = published[0] ?? null;
  let seaLevel: { label: string; points: ReturnType<typeof pointsOf> } | null = null;
  if (rec) {
    const curveId = (rec.params as { curveId?: number | null }).curveId;
    let curve = defaultGlobalCurve();
    if (typeof curveId === "number") {
      const [c] = await db().select().from(seaLevelCurves).where(eq(seaLevelCurves.id, curveId));
      if (c) curve = curveFromRow(c);
    }
    seaLevel = { label: curve.label, points: pointsOf(curve) };
  }
  const versions = await db()
    .select({ id: weightSetVersions.id, version: weightSetVersions.version, setName: weightSets.name })
    .from(weightSetVersions)
    .innerJoin(weightSets, eq(weightSets.id, weightSetVersions.weightSetId))
    .where(eq(weightSets.projectId, project.id))
    .orderBy(weightSets.name, desc(weightSetVersions.version));
  const adopted = await adoptedVersion(project.id);
  const runs = (await listUncertaintyRuns(project.id)).map(uncertaintyView);
  return {
    projectId: project.id,
    mayStart: can(role, "uncertainty.run"),
    reconstruction: rec ? { id: rec.id, name: rec.name, agesKa: [...(rec.manifest as unknown as Manifest).agesKa].sort((a, b) => b - a) } : null,
    seaLevel,
    versions: versions.map((v) => ({ id: v.id, label: `${v.setName} v${v.version}` })),
    adoptedVersionId: adopted?.version.id ?? null,
    runs,
  };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "uncertainty.run");
  const form = await request.formData();
  const n = (k: string) => (form.get(k) === null || form.get(k) === "" ? undefined : Number(form.get(k)));
  try {
    const perturbation = form.get("perturbation") === "uniform" ? { kind: "uniform" as const, spread: (n("spreadPct") ?? 20) / 100 } : { kind: "dirichlet" as const, concentration: n("concentration") ?? 50 };
    const { run } = await startUncertainty(
      project,
      identity.user.id,
      {
        reconstructionId: n("reconstructionId") as number,
        weightSetVersionId: n("weightSetVersionId") as number,
        target: { kind: "age", ageKa: n("ageKa") as number },
        draws: n("draws"),
        seed: n("seed"),
        perturbation,
        landscape: { sigmaScale: n("sigmaScale") ?? 1, datumOffsetM: n("datumOffsetM") ?? 0.5, velocityRel: (n("velocityPct") ?? 10) / 100, streamThresholdFactor: n("streamThresholdFactor") ?? 2, erosionDepthRel: (n("erosionPct") ?? 30) / 100 },
        landscapeDraws: n("landscapeDraws"),
      },
      { clientAddress: context?.clientAddress },
    );
    return { ok: true as const, runId: run.id };
  } catch (e) {
    if (e instanceof UserError) return { ok: false as const, error: e.message };
    if (e && typeof e === "object" && "issues" in e) return { ok: false as const, error: String((e as { issues: { message: string }[] }).issues[0]?.message ?? "Bad input.") };
    throw e;
  }
}

type RunView = Awaited<ReturnType<typeof loader>>["runs"][number];
interface OatFactor {
  name: string;
  weight: number;
  highShare: (number | null)[];
}
interface Result {
  highClass: { label: string; threshold: number };
  overall: { cells: number; robustHighShare: number; contestedShare: number; robustLowShare: number };
  convergence: { draws: number; robustHighShare: number }[];
  oat: { changes: number[]; baseHighShare: number; factors: OatFactor[]; method: string };
  variance: { n: number; cells: number; factors: { name: string; firstOrder: number; total: number }[]; method: string } | null;
  blocks: { name: string; cells: number; areaKm2: number; robustHighShare: number; contestedShare: number; robustLowShare: number; meanPotential: number | null }[];
  landscape: { draws: number; varied: string[] } | null;
  shoreline: { bandKm2: number } | null;
  flooding: { meanRangeKa: number | null; maxRangeKa: number | null } | null;
  notes: string[];
  caution: string;
  timing: { drawMs: number };
}

const pct = (x: number | null | undefined) => (x === null || x === undefined || !Number.isFinite(x) ? "—" : `${(x * 100).toFixed(1)} %`);

function Tornado({ oat }: { oat: Result["oat"] }) {
  const ref = useRef<HTMLDivElement>(null);
  const rows = useMemo(() => {
    const i20 = oat.changes.findIndex((c) => Math.abs(c + 0.2) < 1e-9);
    const j20 = oat.changes.findIndex((c) => Math.abs(c - 0.2) < 1e-9);
    return oat.factors
      .map((f) => ({ name: f.name, low: f.highShare[i20] ?? oat.baseHighShare, high: f.highShare[j20] ?? oat.baseHighShare }))
      .map((r) => ({ ...r, span: Math.abs(r.high - r.low) }))
      .sort((a, b) => b.span - a.span);
  }, [oat]);
  useEffect(() => {
    let cancelled = false;
    void import("@observablehq/plot").then((Plot) => {
      if (cancelled || !ref.current) return;
      const base = oat.baseHighShare * 100;
      const bars = rows.flatMap((r) => [
        { name: r.name, from: base, to: r.low * 100, which: "weight −20 %" },
        { name: r.name, from: base, to: r.high * 100, which: "weight +20 %" },
      ]);
      const chart = Plot.plot({
        width: 640,
        height: 40 + 28 * Math.max(1, rows.length),
        marginLeft: 210,
        style: { fontFamily: "Work Sans, sans-serif", fontSize: "11px", background: "transparent" },
        x: { label: "share of scored cells in the high class (%)", grid: true },
        y: { label: null, domain: rows.map((r) => r.name) },
        color: { domain: ["weight −20 %", "weight +20 %"], range: ["var(--color-sea-500, #3b7fa3)", "var(--color-ember-500, #c8642a)"], legend: true },
        marks: [Plot.barX(bars, { x1: "from", x2: "to", y: "name", fill: "which" }), Plot.ruleX([base], { stroke: "currentColor" })],
      });
      ref.current.replaceChildren(chart);
    });
    return () => {
      cancelled = true;
    };
  }, [rows, oat]);
  return (
    <figure>
      <div ref={ref} aria-hidden="true" className="min-h-[120px]" data-testid="tornado-chart" />
      <figcaption className="text-xs text-sediment-600">{oat.method}</figcaption>
      <table className="mt-2 text-xs" data-testid="tornado-table">
        <thead>
          <tr>
            <th className="pr-3 text-left">Factor</th>
            <th className="pr-3 text-right">weight −20 %</th>
            <th className="pr-3 text-right">weight +20 %</th>
          </tr>
        </thead>
        <tbody>
          {rows.map((r) => (
            <tr key={r.name}>
              <td className="pr-3">{r.name}</td>
              <td className="pr-3 text-right tabular-nums">{pct(r.low)}</td>
              <td className="pr-3 text-right tabular-nums">{pct(r.high)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </figure>
  );
}

function Convergence({ points }: { points: Result["convergence"] }) {
  const ref = useRef<HTMLDivElement>(null);
  useEffect(() => {
    let cancelled = false;
    void import("@observablehq/plot").then((Plot) => {
      if (cancelled || !ref.current) return;
      const data = points.map((p) => ({ draws: p.draws, share: p.robustHighShare * 100 }));
      const chart = Plot.plot({
        width: 640,
        height: 220,
        style: { fontFamily: "Work Sans, sans-serif", fontSize: "11px", background: "transparent" },
        x: { type: "log", label: "draws", grid: true },
        y: { label: "robustly high (p ≥ 0.8), % of scored cells", grid: true, zero: true },
        marks: [Plot.line(data, { x: "draws", y: "share" }), Plot.dot(data, { x: "draws", y: "share" })],
      });
      ref.current.replaceChildren(chart);
    });
    return () => {
      cancelled = true;
    };
  }, [points]);
  return (
    <figure>
      <div ref={ref} aria-hidden="true" className="min-h-[120px]" data-testid="convergence-chart" />
      <figcaption className="text-xs text-sediment-600">The running share of robustly high cells as draws accumulate: a flat line at the end says more draws would not move it.</figcaption>
    </figure>
  );
}

function RunResult({ run }: { run: RunView }) {
  const r = run.result as unknown as Result | null;
  if (!r) return null;
  return (
    <div className="space-y-6" data-testid="uncertainty-result">
      <p className="text-sm">
        High class: <strong>{r.highClass.label}</strong> (potential ≥ {r.highClass.threshold}). Over {r.overall.cells.toLocaleString()} scored cells: robustly high {pct(r.overall.robustHighShare)}, contested {pct(r.overall.contestedShare)}, robustly low {pct(r.overall.robustLowShare)}. Draws took {(r.timing.drawMs / 1000).toFixed(1)} s.
      </p>
      <section>
        <h3 className="font-semibold">Per lease block</h3>
        {r.blocks.length === 0 ? (
          <p className="text-sm text-sediment-600">The project has no lease blocks: upload them as data to read the shares per block.</p>
        ) : (
          <table className="text-sm" data-testid="block-shares">
            <thead>
              <tr>
                <th className="pr-4 text-left">Block</th>
                <th className="pr-4 text-right">area km²</th>
                <th className="pr-4 text-right">robustly high (p ≥ 0.8)</th>
                <th className="pr-4 text-right">contested</th>
                <th className="pr-4 text-right">robustly low (p ≤ 0.2)</th>
                <th className="pr-4 text-right">mean potential</th>
              </tr>
            </thead>
            <tbody>
              {r.blocks.map((b) => (
                <tr key={b.name}>
                  <td className="pr-4">{b.name}</td>
                  <td className="pr-4 text-right tabular-nums">{b.areaKm2.toFixed(1)}</td>
                  <td className="pr-4 text-right tabular-nums">{pct(b.robustHighShare)}</td>
                  <td className="pr-4 text-right tabular-nums">{pct(b.contestedShare)}</td>
                  <td className="pr-4 text-right tabular-nums">{pct(b.robustLowShare)}</td>
                  <td className="pr-4 text-right tabular-nums">{b.meanPotential === null ? "—" : b.meanPotential.toFixed(3)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
      <section>
        <h3 className="font-semibold">One-at-a-time weight sensitivity</h3>
        <Tornado oat={r.oat} />
      </section>
      <section>
        <h3 className="font-semibold">Convergence</h3>
        <Convergence points={r.convergence} />
      </section>
      {r.variance && (
        <section>
          <h3 className="font-semibold">Variance-based sensitivity (estimates, N = {r.variance.n})</h3>
          <table className="text-sm">
            <thead>
              <tr>
                <th className="pr-4 text-left">Factor</th>
                <th className="pr-4 text-right">first order</th>
                <th className="pr-4 text-right">total</th>
              </tr>
            </thead>
            <tbody>
              {r.variance.factors.map((f) => (
                <tr key={f.name}>
                  <td className="pr-4">{f.name}</td>
                  <td className="pr-4 text-right tabular-nums">{f.firstOrder.toFixed(2)}</td>
                  <td className="pr-4 text-right tabular-nums">{f.total.toFixed(2)}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <p className="text-xs text-sediment-600">{r.variance.method}</p>
        </section>
      )}
      {r.landscape && (
        <section className="text-sm">
          <h3 className="font-semibold">Landscape</h3>
          <p>
            {r.landscape.draws} landscape draws varying {r.landscape.varied.join(", ") || "nothing"}.
            {r.shoreline && ` Shoreline envelope (cells at sea in 5–95 % of draws): ${r.shoreline.bandKm2.toFixed(1)} km².`}
            {r.flooding && r.flooding.meanRangeKa !== null && ` Flooding-age range from sea level ± the spread: mean ${r.flooding.meanRangeKa.toFixed(2)} ka, at most ${r.flooding.maxRangeKa!.toFixed(2)} ka.`}
          </p>
        </section>
      )}
      {r.notes.length > 0 && (
        <ul className="list-disc pl-5 text-xs text-sediment-700">
          {r.notes.map((n) => (
            <li key={n}>{n}</li>
          ))}
        </ul>
      )}
      <p className="text-xs" role="note">
        {r.caution}
      </p>
      <p className="text-xs">
        Downloads:{" "}
        {run.downloads.map((d) => (
          <a key={d.name} href={d.href} className="mr-3 underline">
            {d.name}
          </a>
        ))}
      </p>
    </div>
  );
}

export default function ProjectUncertainty({ loaderData }: Route.ComponentProps) {
  const d = loaderData;
  const started = useActionData<typeof action>();
  const nav = useNavigation();
  const revalidator = useRevalidator();
  const ages = d.reconstruction?.agesKa ?? [];
  const [ageKa, setAgeKa] = useState<number>(ages[0] ?? 0);
  const [playing, setPlaying] = useState(false);
  const running = d.runs.some((r) => r.status === "running");
  useEffect(() => {
    if (!running) return;
    const t = setInterval(() => revalidator.revalidate(), 1500);
    return () => clearInterval(t);
  }, [running, revalidator]);
  const [shownId, setShownId] = useState<number | null>(null);
  const shown = d.runs.find((r) => r.id === (shownId ?? (started?.ok ? started.runId : null))) ?? d.runs[0] ?? null;
  return (
    <div className="space-y-6 p-6">
      <h1 className="text-xl font-semibold">Uncertainty</h1>
      <p className="max-w-prose text-sm text-sediment-700">
        How sure is the potential? Draws of the weights (Dirichlet around the weight set, or ±x % then rescaled) and of the landscape's own parameters give, per cell, the
        probability of the high class; cells with p ≥ 0.8 are robustly high, p ≤ 0.2 robustly low, the rest contested. Seeded: the same seed gives the same result.
      </p>
      {!d.reconstruction ? (
        <p className="text-sm">Publish a reconstruction first.</p>
      ) : (
        <>
          {d.seaLevel && <SeaLevelStrip points={d.seaLevel.points} label={d.seaLevel.label} agesKa={ages} ageKa={ageKa} onAge={setAgeKa} playing={playing} onPlay={setPlaying} />}
          {d.mayStart ? (
            <Form method="post" className="grid max-w-3xl grid-cols-2 gap-3 text-sm" aria-label="Start an uncertainty run">
              <input type="hidden" name="reconstructionId" value={d.reconstruction.id} />
              <input type="hidden" name="ageKa" value={ageKa} />
              <label className="col-span-2">
                Weight-set version{" "}
                <select name="weightSetVersionId" defaultValue={d.adoptedVersionId ?? d.versions[0]?.id} className="border px-1">
                  {d.versions.map((v) => (
                    <option key={v.id} value={v.id}>
                      {v.label}
                      {v.id === d.adoptedVersionId ? " (adopted)" : ""}
                    </option>
                  ))}
                </select>{" "}
                at <strong data-testid="chosen-age">{ageKa} ka</strong> (choose on the strip)
              </label>
              <label>
                Draws <input name="draws" type="number" defaultValue={1000} min={1} max={10000} className="w-24 border px-1" />
              </label>
              <label>
                Seed <input name="seed" type="number" placeholder="chosen for you" min={0} className="w-32 border px-1" />
              </label>
              <label>
                Weights{" "}
                <select name="perturbation" defaultValue="dirichlet" className="border px-1">
                  <option value="dirichlet">Dirichlet</option>
                  <option value="uniform">± % then rescaled</option>
                </select>
              </label>
              <label>
                Concentration <input name="concentration" type="number" step="any" defaultValue={50} className="w-20 border px-1" /> / spread{" "}
                <input name="spreadPct" type="number" step="any" defaultValue={20} className="w-16 border px-1" /> %
              </label>
              <label>
                Sea level ± <input name="sigmaScale" type="number" step="any" defaultValue={1} min={0} className="w-16 border px-1" /> σ
              </label>
              <label>
                Datum offset ± <input name="datumOffsetM" type="number" step="any" defaultValue={0.5} min={0} className="w-16 border px-1" /> m
              </label>
              <label>
                Sediment velocity ± <input name="velocityPct" type="number" step="any" defaultValue={10} min={0} className="w-16 border px-1" /> %
              </label>
              <label>
                Stream threshold ×÷ <input name="streamThresholdFactor" type="number" step="any" defaultValue={2} min={1} className="w-16 border px-1" />
              </label>
              <label>
                Erosion depth ± <input name="erosionPct" type="number" step="any" defaultValue={30} min={0} className="w-16 border px-1" /> %
              </label>
              <label>
                Landscape draws <input name="landscapeDraws" type="number" defaultValue={25} min={1} max={500} className="w-20 border px-1" />
              </label>
              <div className="col-span-2">
                <PrimaryButton type="submit" disabled={nav.state !== "idle"}>
                  Run the uncertainty analysis
                </PrimaryButton>
              </div>
              {started && !started.ok && (
                <p role="alert" className="col-span-2 text-sm text-caution-800">
                  {started.error}
                </p>
              )}
            </Form>
          ) : (
            <p className="text-sm text-sediment-600">You can read uncertainty runs; analysts, leads and owners start them.</p>
          )}
        </>
      )}
      <section>
        <h2 className="font-semibold">Runs</h2>
        {d.runs.length === 0 ? (
          <p className="text-sm text-sediment-600">
            {d.mayStart ? "No analysis yet. Choose an age on the strip and a weight-set version above, then run it: 1 000 draws take seconds." : "No analysis yet. A reviewer, analyst, lead or owner of this project runs one."}
          </p>
        ) : null}
        <ul className="text-sm">
          {d.runs.map((r) => (
            <li key={r.id}>
              <button type="button" className="underline" onClick={() => setShownId(r.id)}>
                #{r.id}
              </button>{" "}
              {r.version.setName} v{r.version.number}, {r.targetLabel}, {r.params.draws} draws, seed {r.params.seed} — <span data-testid={`run-status-${r.id}`}>{r.status}</span>
              {r.status === "running" && ` (${Math.round(r.progress * 100)} %)`}
              {r.error && <span className="text-caution-800"> {r.error}</span>}
            </li>
          ))}
        </ul>
      </section>
      {shown && shown.status === "published" && <RunResult run={shown} />}
    </div>
  );
}
