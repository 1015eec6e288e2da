// Sections 5–8 of the printable review report: the conflict table, lease-block figures, the frozen
// uncertainty run and the zones — tables for print (black on white), each with the rule it follows.
import type { ReviewReport } from "~/review-report.server";

const pct = (x: number | null | undefined) => (x === null || x === undefined || !Number.isFinite(x) ? "—" : `${(x * 100).toFixed(1)} %`);
const n2 = (x: number | null | undefined, d = 2) => (x === null || x === undefined || !Number.isFinite(x) ? "—" : x.toFixed(d));

function Unavailable({ text }: { text: string }) {
  return (
    <p className="not-available" data-testid="not-available">
      {text}
    </p>
  );
}

function Notes({ notes }: { notes: string[] }) {
  if (!notes.length) return null;
  return (
    <ul className="cite">
      {notes.map((n) => (
        <li key={n}>{n}</li>
      ))}
    </ul>
  );
}

export function ConflictSection({ report }: { report: ReviewReport }) {
  const t = report.desk?.conflicts;
  if (!t) return <Unavailable text={`The conflict table is not shown. ${report.deskProblem ?? ""}`} />;
  return (
    <>
      <p className="cite">{t.reachRule}</p>
      {t.rows.length ? (
        <table data-testid="report-conflicts">
          <thead>
            <tr>
              <th>Asset</th>
              <th className="num">Impact depth</th>
              <th className="num">Depth to horizon (min / median)</th>
              <th className="num">Horizon unassessed</th>
              <th>Reach</th>
              <th>Highest class</th>
              <th>Mitigation</th>
            </tr>
          </thead>
          <tbody>
            {t.rows.map((r) => (
              <tr key={`${r.dataset}/${r.assetId}`}>
                <td>
                  {r.assetId}
                  {r.kind ? ` (${r.kind})` : ""}
                </td>
                <td className="num">{n2(r.impactDepthM, 1)} m</td>
                <td className="num">
                  {n2(r.depthToHorizonM.min, 1)} / {n2(r.depthToHorizonM.median, 1)} m
                </td>
                <td className="num">{pct(r.unassessedShare)}</td>
                <td>{r.reachLabel}</td>
                <td>{r.highestClass ?? "—"}</td>
                <td>{r.mitigation.label}</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
      <p className="cite">{t.mitigationRule}</p>
      <Notes notes={t.notes} />
    </>
  );
}

export function BlocksSection({ report }: { report: ReviewReport }) {
  const t = report.desk?.blocks;
  if (!t) return <Unavailable text={`The lease-block figures are not shown. ${report.deskProblem ?? ""}`} />;
  const labels = t.scoring.classification.labels;
  return (
    <>
      {t.rows.length ? (
        <table data-testid="report-blocks">
          <thead>
            <tr>
              <th>Block</th>
              <th className="num">Area</th>
              {labels.map((l) => (
                <th key={l} className="num">
                  {l}
                </th>
              ))}
              <th className="num">Unassessed</th>
              <th className="num">Mean / max potential</th>
              <th className="num">Known sites</th>
              <th>Land at (ka BP)</th>
            </tr>
          </thead>
          <tbody>
            {t.rows.map((r) => (
              <tr key={`${r.dataset}/${r.name}`}>
                <td>{r.name}</td>
                <td className="num">{n2(r.areaKm2)} km²</td>
                {r.classes.map((c) => (
                  <td key={c.label} className="num">
                    {pct(c.share)}
                  </td>
                ))}
                <td className="num">{pct(r.unassessed.share)}</td>
                <td className="num">
                  {n2(r.meanPotential, 3)} / {n2(r.maxPotential, 3)}
                </td>
                <td className="num">{r.sites.shown}</td>
                <td>{r.landAgesKa.length ? r.landAgesKa.join(", ") : "—"}</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
      <Notes notes={t.notes} />
    </>
  );
}

export function UncertaintySection({ report }: { report: ReviewReport }) {
  const s = report.review.snapshot;
  if (!s.uncertaintyRun) return <p>No uncertainty run was frozen with this review: the potential above is shown without its spread.</p>;
  const u = report.uncertainty;
  const r = u?.result as
    | null
    | {
        params: { draws: number; seed: number; threshold: number; highLabel: string };
        overall: { cells: number; robustHighShare: number; contestedShare: number; robustLowShare: number };
        convergence: { draws: number; robustHighShare: number }[];
        blocks: { name: string; areaKm2: number; robustHighShare: number; contestedShare: number; robustLowShare: number; meanPotential: number | null }[];
        oat: { method: string; changes: number[]; baseHighShare: number; factors: { name: string; highShare: (number | null)[] }[] };
        variance: null | { method: string; factors: { name: string; firstOrder: number; total: number }[] };
        notes: string[];
      };
  if (!u || !r) return <Unavailable text={`Uncertainty run #${s.uncertaintyRun.id} has no published result to show.`} />;
  const lo = r.oat.changes.indexOf(Math.min(...r.oat.changes));
  const hi = r.oat.changes.indexOf(Math.max(...r.oat.changes));
  const tornado = [...r.oat.factors]
    .map((f) => ({ name: f.name, low: f.highShare[lo], high: f.highShare[hi] }))
    .sort((a, b) => Math.abs((b.high ?? 0) - (b.low ?? 0)) - Math.abs((a.high ?? 0) - (a.low ?? 0)));
  return (
    <div data-testid="report-uncertainty">
      <p>
        Run #{u.id}, {u.targetLabel}: {r.params.draws} draws, seed {r.params.seed}; a cell is robustly {r.params.highLabel} when it falls in that class (≥ {r.params.threshold}) in at least 80 % of the draws,
        robustly low when in at most 20 %, contested between. Over {r.overall.cells} scored cells: robustly high {pct(r.overall.robustHighShare)}, contested {pct(r.overall.contestedShare)}, robustly low{" "}
        {pct(r.overall.robustLowShare)}.
      </p>
      {r.blocks.length ? (
        <table>
          <thead>
            <tr>
              <th>Block</th>
              <th className="num">Area</th>
              <th className="num">Robustly high</th>
              <th className="num">Contested</th>
              <th className="num">Robustly low</th>
              <th className="num">Mean potential</th>
            </tr>
          </thead>
          <tbody>
            {r.blocks.map((b) => (
              <tr key={b.name}>
                <td>{b.name}</td>
                <td className="num">{n2(b.areaKm2)} km²</td>
                <td className="num">{pct(b.robustHighShare)}</td>
                <td className="num">{pct(b.contestedShare)}</td>
                <td className="num">{pct(b.robustLowShare)}</td>
                <td className="num">{n2(b.meanPotential, 3)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
      <h3>Convergence</h3>
      <p className="cite">Share robustly high after {r.convergence.map((c) => `${c.draws} draws: ${pct(c.robustHighShare)}`).join("; ")}.</p>
      <h3>One-at-a-time weight sensitivity</h3>
      <p className="cite">{r.oat.method} Base share in the high class {pct(r.oat.baseHighShare)}.</p>
      <table>
        <thead>
          <tr>
            <th>Factor</th>
            <th className="num">High share at {r.oat.changes[lo]} %</th>
            <th className="num">at +{r.oat.changes[hi]} %</th>
          </tr>
        </thead>
        <tbody>
          {tornado.map((f) => (
            <tr key={f.name}>
              <td>{f.name}</td>
              <td className="num">{pct(f.low)}</td>
              <td className="num">{pct(f.high)}</td>
            </tr>
          ))}
        </tbody>
      </table>
      {r.variance ? (
        <>
          <h3>Variance-based sensitivity</h3>
          <p className="cite">{r.variance.method}</p>
          <table>
            <thead>
              <tr>
                <th>Factor</th>
                <th className="num">First order</th>
                <th className="num">Total</th>
              </tr>
            </thead>
            <tbody>
              {r.variance.factors.map((f) => (
                <tr key={f.name}>
                  <td>{f.name}</td>
                  <td className="num">{n2(f.firstOrder, 3)}</td>
                  <td className="num">{n2(f.total, 3)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </>
      ) : null}
      <Notes notes={r.notes ?? []} />
    </div>
  );
}

export function ZonesSection({ report }: { report: ReviewReport }) {
  const d = report.desk;
  if (!d) return <Unavailable text={`The zones are not shown. ${report.deskProblem ?? ""}`} />;
  const ex = d.exclusion.zones as { featureKindLabel: string; label: string; source: string; bufferM: number; positionUncertaintyM: number; areaKm2: number }[];
  const mi = d.mitigation.zones as { label: string; text: string; areaKm2: number }[];
  return (
    <>
      <h3>Mitigation zones (from the potential; never exclusion)</h3>
      {mi.length ? (
        <table data-testid="report-mitigation">
          <thead>
            <tr>
              <th>Measure</th>
              <th className="num">Area</th>
              <th>What it asks</th>
            </tr>
          </thead>
          <tbody>
            {mi.map((m) => (
              <tr key={m.label}>
                <td>{m.label}</td>
                <td className="num">{n2(m.areaKm2)} km²</td>
                <td>{m.text}</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : (
        <p>No mitigation zone: nothing in the scoring is classed.</p>
      )}
      <Notes notes={d.mitigation.notes} />
      <h3>Exclusion zones (discrete features)</h3>
      <p className="cite">
        Buffers as frozen with the review:{" "}
        {Object.entries(d.exclusion.buffersM)
          .map(([k, v]) => `${k.replace(/_/g, " ")} ${v} m`)
          .join(", ")}
        ; each zone is the feature's mapped extent plus its position uncertainty plus the buffer.
      </p>
      {ex.length ? (
        <table data-testid="report-exclusion">
          <thead>
            <tr>
              <th>Feature</th>
              <th>Kind</th>
              <th className="num">Uncertainty + buffer</th>
              <th className="num">Area</th>
            </tr>
          </thead>
          <tbody>
            {ex.map((z, i) => (
              <tr key={i}>
                <td>
                  {z.label} <span className="cite">({z.source})</span>
                </td>
                <td>{z.featureKindLabel}</td>
                <td className="num">
                  {n2(z.positionUncertaintyM, 0)} + {n2(z.bufferM, 0)} m
                </td>
                <td className="num">{n2(z.areaKm2, 3)} km²</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : (
        <p>No discrete features (wrecks, anomalies judged archaeological, find spots) to exclude.</p>
      )}
      <Notes notes={d.exclusion.notes} />
    </>
  );
}
