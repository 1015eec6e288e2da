// The targets of a list, every field of issue 11, one row per target (a full-width page table), with
// the status form per row for those who may record cores on a published list.
import { Form } from "react-router";
import { formatAgeRuns } from "~/scoring/target-selection";

export interface TargetRowView {
  id: number;
  rank: number;
  waypoint: string;
  status: string;
  mode: string;
  modeDetail: string;
  x: number;
  y: number;
  epsg: number;
  lat: number;
  lon: number;
  latDdm: string;
  lonDdm: string;
  waterDepthM: number;
  horizonDepthM: number | null;
  horizonTwtMs: number | null;
  coverTypeId: string;
  plannedPenetrationM: number;
  expectedPenetrationM: number;
  nearestLine: { line: string; distanceM: number; fix: string; fixDistanceM: number } | null;
  nearbyExclusions: Array<{ name: string; kind: string; distanceM: number; bufferM: number }>;
  landAgesKa: number[];
  score: number;
  occupation: number | null;
  contributions: Array<{ id: string; weight: number; factorScore: number; contribution: number }>;
  core: Record<string, unknown> | null;
}

const f = (v: number | null | undefined, d = 1) => (v === null || v === undefined || !Number.isFinite(v) ? "—" : v.toFixed(d));

function StatusForm({ t }: { t: TargetRowView }) {
  if (t.status === "result") return null;
  const next = t.status === "planned" ? "cored" : "result";
  return (
    <details key={t.status} className="print:hidden">
      <summary className="cursor-pointer text-xs text-deep-800 underline">{next === "cored" ? "Record the core" : "Record the result"}</summary>
      <Form method="post" className="mt-1 grid w-64 gap-1 text-xs" aria-label={`Record ${t.waypoint}`}>
        <input type="hidden" name="intent" value="status" />
        <input type="hidden" name="targetId" value={t.id} />
        <input type="hidden" name="status" value={next} />
        {next === "cored" ? (
          <>
            <label>
              Penetration (m) <input name="penetrationM" required inputMode="decimal" className="w-16 rounded-sm border border-sand-300 px-1" />
            </label>
            <label>
              Recovery (m) <input name="recoveryM" required inputMode="decimal" className="w-16 rounded-sm border border-sand-300 px-1" />
            </label>
            <label>
              Horizon reached{" "}
              <select name="horizonReached" className="rounded-sm border border-sand-300">
                <option value="yes">yes</option>
                <option value="no">no</option>
                <option value="refused">refused</option>
              </select>
            </label>
            <label>
              Position achieved x y (empty: as planned) <input name="achieved" className="w-40 rounded-sm border border-sand-300 px-1" />
            </label>
          </>
        ) : (
          <>
            <label>
              Preserved land surface{" "}
              <select name="preservedLandSurface" className="rounded-sm border border-sand-300">
                <option value="yes">yes</option>
                <option value="no">no</option>
                <option value="unknown">unknown</option>
              </select>
            </label>
            <label>
              Archaeological indicators (empty: none) <input name="archaeologicalIndicators" className="w-full rounded-sm border border-sand-300 px-1" />
            </label>
            <label>
              Calibrated range cal BP, older–younger <input name="calBp" placeholder="12150-11900" className="w-28 rounded-sm border border-sand-300 px-1" />
            </label>
          </>
        )}
        <button type="submit" className="justify-self-start rounded-sm border border-deep-700 px-2 py-0.5 text-deep-800">
          Save
        </button>
      </Form>
    </details>
  );
}

/** The three largest contributions (weight × factor score), the rest on hover and in print. */
function Contributions({ t }: { t: TargetRowView }) {
  const known = t.contributions.filter((c) => c.weight > 0 && Number.isFinite(c.contribution)).sort((a, b) => b.contribution - a.contribution);
  if (!known.length) return <>—</>;
  const word = (c: TargetRowView["contributions"][number]) => `${c.id.replace(/_/g, " ")} ${c.weight.toFixed(2)} × ${c.factorScore.toFixed(2)}`;
  const rest = known.slice(3);
  return (
    <span title={known.map(word).join("\n")}>
      {known.slice(0, 3).map(word).join("; ")}
      {rest.length ? <span className="text-sediment-600 print:hidden"> (+{rest.length} more)</span> : null}
      {rest.length ? <span className="hidden print:inline">; {rest.map(word).join("; ")}</span> : null}
      {t.occupation !== null ? <div className="text-sediment-600">sum {t.occupation.toFixed(3)}</div> : null}
    </span>
  );
}

export function TargetsTable({ targets, agesKa, mayRecord, exact }: { targets: TargetRowView[]; agesKa: number[]; mayRecord: boolean; exact: boolean }) {
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-xs" aria-label="Core targets">
        <thead className="border-b border-sand-300 text-left uppercase tracking-wide text-sediment-600">
          <tr>
            <th className="py-1 pr-2">Rank</th>
            <th className="py-1 pr-2">Waypoint</th>
            <th className="py-1 pr-2">Status</th>
            <th className="py-1 pr-2">Mode</th>
            <th className="py-1 pr-2">x, y (EPSG:{targets[0]?.epsg})</th>
            <th className="py-1 pr-2">Lat, lon (WGS 84)</th>
            <th className="py-1 pr-2">Water depth (m)</th>
            <th className="py-1 pr-2">Horizon (m below seabed / TWT ms)</th>
            <th className="py-1 pr-2">Cover</th>
            <th className="py-1 pr-2">Planned / expected penetration (m)</th>
            <th className="py-1 pr-2">Nearest line, fix</th>
            <th className="py-1 pr-2">Nearby exclusions</th>
            <th className="py-1 pr-2">Land at</th>
            <th className="py-1 pr-2">Score</th>
            <th className="py-1">Why it ranks here (weight × factor score)</th>
          </tr>
        </thead>
        <tbody>
          {targets.map((t) => (
            <tr key={t.id} className="border-b border-sand-100 align-top" data-waypoint={t.waypoint}>
              <td className="py-1 pr-2 tabular-nums">{t.rank}</td>
              <td className="py-1 pr-2 font-medium">{t.waypoint}</td>
              <td className="py-1 pr-2">
                <span data-status>{t.status}</span>
                {mayRecord ? <StatusForm t={t} /> : null}
              </td>
              <td className="py-1 pr-2">
                {t.mode}
                <div className="text-sediment-600">{t.modeDetail}</div>
              </td>
              <td className="py-1 pr-2 tabular-nums">
                {t.x.toFixed(exact ? 1 : 0)}, {t.y.toFixed(exact ? 1 : 0)}
              </td>
              <td className="py-1 pr-2 tabular-nums">
                {t.latDdm} {t.lonDdm}
                <div className="text-sediment-600">
                  {t.lat.toFixed(6)}, {t.lon.toFixed(6)}
                </div>
              </td>
              <td className="py-1 pr-2 tabular-nums">{f(t.waterDepthM)}</td>
              <td className="py-1 pr-2 tabular-nums">{t.horizonDepthM === null ? "unassessed" : `${f(t.horizonDepthM, 2)} / ${f(t.horizonTwtMs, 2)}`}</td>
              <td className="py-1 pr-2">{t.coverTypeId}</td>
              <td className="py-1 pr-2 tabular-nums">
                {f(t.plannedPenetrationM, 2)} / {f(t.expectedPenetrationM, 1)}
              </td>
              <td className="py-1 pr-2">{t.nearestLine ? `${t.nearestLine.line}${t.nearestLine.fix ? `, fix ${t.nearestLine.fix}` : ""}${Number.isFinite(t.nearestLine.distanceM) ? ` (${t.nearestLine.distanceM.toFixed(0)} m)` : ""}` : "—"}</td>
              <td className="py-1 pr-2">{t.nearbyExclusions.length ? t.nearbyExclusions.map((e) => `${e.kind === "find_spot" ? e.name : `${e.name} (${e.kind})`}${Number.isFinite(e.distanceM) ? ` ${e.distanceM.toFixed(0)} m` : ""}`).join("; ") : "none near"}</td>
              <td className="py-1 pr-2">{formatAgeRuns(agesKa, t.landAgesKa)}</td>
              <td className="py-1 pr-2 tabular-nums">{f(t.score, 3)}</td>
              <td className="py-1">
                <Contributions t={t} />
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
