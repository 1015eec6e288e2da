// The headline figures of one validation — the number of sites first, then AUC and the top class's
// gain with their intervals — and where they came from (classification, ages, area, hold-out).
import { fmt, pct, type ValidationView } from "./types";

export function ValidationSummary({ name, v, marker }: { name: string; v: ValidationView; marker?: string }) {
  const top = v.gain?.rows[0];
  return (
    <section aria-label={`Figures for ${name}`} data-testid="validation-summary" data-status={v.status} className="rounded-sm border border-sand-200 bg-white p-4">
      <h3 className="font-semibold text-deep-800">
        {marker ? <span aria-hidden="true">{marker} </span> : null}
        {name}
      </h3>
      <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm">
        <dt className="text-sediment-600">Sites and cores scored</dt>
        <dd className="tabular-nums" data-testid="site-count">
          <strong>{v.counts.presences}</strong> ({v.counts.sites} site{v.counts.sites === 1 ? "" : "s"}, {v.counts.cores} core{v.counts.cores === 1 ? "" : "s"} with archaeological material
          {v.counts.inUnassessed ? `; ${v.counts.inUnassessed} in unassessed ground` : ""})
        </dd>
        <dt className="text-sediment-600">ROC AUC</dt>
        <dd className="tabular-nums" data-testid="auc">
          {v.auc ? (
            <>
              <strong>{fmt(v.auc.estimate)}</strong> ({Math.round(v.auc.level * 100)} % interval {fmt(v.auc.lower)}–{fmt(v.auc.upper)}), {v.auc.presences} sites against {v.auc.background.toLocaleString("en")} background cells
              {v.auc.sampled ? ` (a seeded sample of ${v.auc.backgroundCells.toLocaleString("en")})` : ""}
            </>
          ) : (
            "— (no site with a score)"
          )}
        </dd>
        <dt className="text-sediment-600">Gain of the top class</dt>
        <dd className="tabular-nums" data-testid="top-gain">
          {top ? (
            <>
              <strong>{fmt(top.gain.estimate)}</strong> ({fmt(top.gain.lower)}–{fmt(top.gain.upper)}) — “{top.label}” holds {pct(top.areaShare)} of the area and {pct(top.siteShare)} of the sites
            </>
          ) : (
            "—"
          )}
        </dd>
        <dt className="text-sediment-600">Ages</dt>
        <dd>{v.window.label}</dd>
        <dt className="text-sediment-600">Area</dt>
        <dd>
          {v.area.landCells.toLocaleString("en")} land cells ({v.area.landAreaKm2.toFixed(2)} km²). {v.surveyArea.note}
        </dd>
        <dt className="text-sediment-600">Hold-out</dt>
        <dd data-testid="holdout-note">{v.holdout.note}</dd>
      </dl>
      {v.message ? <p className="mt-2 rounded-sm bg-sand-100 px-3 py-2 text-sm text-sediment-800">{v.message}</p> : null}
    </section>
  );
}

/** The gain per class as a table (the text of the gain chart): area, sites, gain and cumulative gain with intervals. */
export function GainTable({ name, v }: { name: string; v: ValidationView }) {
  if (!v.gain) return null;
  const rows = [...v.gain.rows, ...(v.gain.unassessed ? [v.gain.unassessed] : [])];
  return (
    <table className="w-full text-sm" aria-label={`Gain per class for ${name}`} data-testid="gain-table">
      <caption className="pb-1 text-left text-xs text-sediment-600">
        {name}: {v.counts.presences} sites and cores; intervals are {Math.round(v.bootstrap.level * 100)} % percentile bootstrap intervals over {v.bootstrap.replicates.toLocaleString("en")} resamples of the sites (seed {v.bootstrap.seed}).
      </caption>
      <thead>
        <tr className="border-b border-sand-300 text-left text-xs text-sediment-600">
          <th className="py-1 pr-2">Class</th>
          <th className="pr-2">Potential</th>
          <th className="pr-2 text-right">Area</th>
          <th className="pr-2 text-right">Sites</th>
          <th className="pr-2 text-right">Gain (interval)</th>
          <th className="text-right">Cumulative gain (interval)</th>
        </tr>
      </thead>
      <tbody className="tabular-nums">
        {rows.map((r) => (
          <tr key={r.label} className="border-b border-sand-100">
            <td className="py-1 pr-2">{r.label}</td>
            <td className="pr-2">{r.from === null ? "unassessed ground" : `${r.from.toFixed(2)}–${r.to!.toFixed(2)}`}</td>
            <td className="pr-2 text-right">
              {pct(r.areaShare)} <span className="text-xs text-sediment-600">({r.areaKm2.toFixed(2)} km²)</span>
            </td>
            <td className="pr-2 text-right">
              {r.sites} <span className="text-xs text-sediment-600">({pct(r.siteShare)})</span>
            </td>
            <td className="pr-2 text-right">
              {fmt(r.gain.estimate)} <span className="text-xs text-sediment-600">({fmt(r.gain.lower)} to {fmt(r.gain.upper)})</span>
            </td>
            <td className="text-right">
              {r.cumulative ? (
                <>
                  {fmt(r.cumulative.gain.estimate)} <span className="text-xs text-sediment-600">({fmt(r.cumulative.gain.lower)} to {fmt(r.cumulative.gain.upper)})</span>
                </>
              ) : (
                "—"
              )}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

/** Every record considered: scored (class and score) or left out with the reason. Coordinates only where the API gave them. */
export function EvidenceTable({ v }: { v: ValidationView }) {
  const rows = v.evidence as Array<(typeof v.evidence)[number] & { x?: number; y?: number }>;
  const withCoords = rows.some((r) => r.x !== undefined);
  return (
    <table className="w-full text-sm" data-testid="evidence-table">
      <caption className="pb-1 text-left text-xs text-sediment-600">
        Sites and cores considered for {v.window.label}. Derived, trawled and dredged finds are shown but never scored; a core without archaeological material is not an absence. {v.coordinates === "exact where you may see them" ? "" : "Positions are not shown to your role."}
      </caption>
      <thead>
        <tr className="border-b border-sand-300 text-left text-xs text-sediment-600">
          <th className="py-1 pr-2">Record</th>
          <th className="pr-2">Context</th>
          <th className="pr-2">Dated (ka BP)</th>
          <th className="pr-2">Scored</th>
          {withCoords ? <th className="text-right">Position (m)</th> : null}
        </tr>
      </thead>
      <tbody>
        {rows.map((r) => (
          <tr key={r.key} className="border-b border-sand-100" data-used={r.used}>
            <td className="py-1 pr-2">
              {r.label}
              {r.heldOut ? <span className="ml-1 text-xs text-sediment-600">(held out)</span> : null}
            </td>
            <td className="pr-2">{r.context.replace("_", "-")}</td>
            <td className="pr-2 tabular-nums">{r.youngKa === null ? "—" : `${+r.youngKa.toFixed(2)}–${+r.oldKa!.toFixed(2)}`}</td>
            <td className="pr-2">{r.used ? `${r.className}${r.score === null ? "" : ` (${r.score.toFixed(3)})`}` : <span className="text-sediment-600">no — {r.reason}</span>}</td>
            {withCoords ? <td className="text-right tabular-nums text-xs">{r.x !== undefined ? `${r.x.toFixed(0)}, ${r.y!.toFixed(0)}` : "not shown"}</td> : null}
          </tr>
        ))}
      </tbody>
    </table>
  );
}
