// The printable report of one review (design §7): scope, data and coverage, methods with citations,
// maps drawn on the server from the frozen scoring, the conflict table, block figures, uncertainty,
// zones, the signed decision with its hash, and the cautions of design §10. A4 or Letter portrait,
// black on white (report.css). Every figure comes from the snapshot's frozen ids; sections whose
// source is not built yet say so and show no number.
import { Link } from "react-router";
import { requireProjectAccess } from "~/permissions.server";
import { getReviewRow, reviewView } from "~/reviews.server";
import { reviewReport } from "~/review-report.server";
import { refusal } from "~/security.server";
import { formatBytes, formatUtc } from "~/format";
import { SnapshotTable } from "~/components/review/SnapshotTable";
import { Cautions } from "~/components/Cautions";
import { BlocksSection, ConflictSection, UncertaintySection, ZonesSection } from "~/components/review/ReportSections";
import "~/components/review/report.css";
import type { Route } from "./+types/project-review-report";

export const meta = ({ data }: Route.MetaArgs) => [{ title: `Report: ${data?.report.review.title ?? "review"} · Lowstand` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, identity, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const row = params.reviewId && /^\d{1,9}$/.test(params.reviewId) ? await getReviewRow(Number(params.reviewId)) : null;
  if (!row || row.projectId !== project.id) throw refusal(request, 404, "no_such_review", "There is no such review in this project.");
  const report = await reviewReport(await reviewView(row), { userId: identity.user.id, role });
  return { projectId: project.id, projectName: project.name, report, printedAt: new Date().toISOString() };
}

const pct = (x: number) => `${(x * 100).toFixed(1)} %`;
const km2 = (x: number) => `${x.toFixed(2)} km²`;
const num = (x: number | null | undefined, d = 3) => (x === null || x === undefined ? "—" : x.toFixed(d));

function NotAvailable({ what }: { what: string }) {
  return (
    <p className="not-available" data-testid="not-available">
      {what} is not drawn in this report yet. No figure is shown rather than one from other data.
    </p>
  );
}

export default function ReviewReportPage({ loaderData }: Route.ComponentProps) {
  const { projectId, projectName, report, printedAt } = loaderData;
  const { review, methods, scoringStats: st, classes, classification } = report;
  const s = review.snapshot;
  let fig = 0;
  return (
    <>
      <nav className="report-toolbar" aria-label="Report">
        <Link to={`/projects/${projectId}/reviews/${review.id}`} className="underline">
          Back to the review
        </Link>
        <button type="button" className="underline" onClick={() => window.print()}>
          Print
        </button>
      </nav>
      <article className="review-report" data-testid="review-report">
        <header>
          <p>
            Lowstand · review report · {projectName}
          </p>
          <h1>{review.title}</h1>
          <p>
            Review #{review.id}, opened {formatUtc(review.createdAt)} UTC{review.openedBy ? ` by ${review.openedBy}` : ""}. Status: {review.decisionWords ?? "open, not decided"}. Printed {formatUtc(printedAt)} UTC.
          </p>
          <p>
            Snapshot hash (SHA-256 of the canonical JSON): <span className="hash">{review.snapshotHash}</span> — {review.snapshotVerified ? "verified against the stored snapshot" : "DOES NOT MATCH the stored snapshot"}.
          </p>
        </header>

        <section aria-labelledby="r-scope">
          <h2 id="r-scope">1. Scope</h2>
          <p>
            {s.subject.kind === "weights" ? (
              <>
                Site potential from weight set “{s.subject.weightSet.name}”, version {s.subject.version.number}, scored at full resolution for {s.scoring?.targetLabel} on reconstruction “
                {s.reconstruction.name || `#${s.reconstruction.id}`}” (ages {s.reconstruction.agesKa.join(", ")} ka BP).
              </>
            ) : (
              <>
                Trained model “{s.subject.model.name || `#${s.subject.model.id}`}” on reconstruction “{s.reconstruction.name || `#${s.reconstruction.id}`}” (ages {s.reconstruction.agesKa.join(", ")} ka BP).
              </>
            )}{" "}
            Grid {s.reconstruction.grid.width} × {s.reconstruction.grid.height} cells of {s.reconstruction.grid.cellSizeX} × {s.reconstruction.grid.cellSizeY} m in EPSG:{s.project.crsEpsg}, origin ({s.reconstruction.grid.originX},{" "}
            {s.reconstruction.grid.originY}).
          </p>
          <h3>What the review froze</h3>
          <SnapshotTable snapshot={s} compact />
        </section>

        <section aria-labelledby="r-data">
          <h2 id="r-data">2. Data and coverage</h2>
          {s.datasets.length === 0 ? (
            <p>The project had no datasets when the review was opened.</p>
          ) : (
            <table>
              <thead>
                <tr>
                  <th>#</th>
                  <th>Kind</th>
                  <th>Name (file)</th>
                  <th className="num">Size</th>
                  <th className="num">Records</th>
                  <th>SHA-256 of the upload</th>
                </tr>
              </thead>
              <tbody>
                {s.datasets.map((d) => (
                  <tr key={d.id}>
                    <td>{d.id}</td>
                    <td>{d.kind.replace(/_/g, " ")}</td>
                    <td>
                      {d.name}
                      {d.originalName && d.originalName !== d.name ? ` (${d.originalName})` : ""}
                    </td>
                    <td className="num">{formatBytes(d.sizeBytes)}</td>
                    <td className="num">{d.count}</td>
                    <td className="hash">{d.sha256}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          )}
          {st ? (
            <p>
              Coverage of the scoring: {km2(st.occupiable.areaKm2)} occupiable (land and intertidal) at the target; {km2(st.unassessed.areaKm2)} of it unassessed (no horizon data: unknown, not
              low). Preservation model {st.preservation.active ? "active" : "inactive"}: {st.preservation.reason}
              {st.preservation.evidence ? ` Horizon evidence: ${st.preservation.evidence.points} points (${st.preservation.evidence.intact} intact, ${st.preservation.evidence.truncated} truncated).` : ""}
            </p>
          ) : (
            <p>This review looks at a trained model; its coverage is described by the model card.</p>
          )}
        </section>

        <section aria-labelledby="r-methods">
          <h2 id="r-methods">3. Methods and citations</h2>
          {methods ? (
            <>
              <p>
                Occupation at each age is the weighted linear combination of factor scores (weights normalised to sum 1) over land and intertidal cells — {report.citations.wlc} Each
                factor's value becomes a 0–1 score through its curve — {report.citations.curves}
                {methods.versionHashMatches ? "" : " (Warning: the stored version no longer matches its frozen content hash.)"}
              </p>
              <table>
                <thead>
                  <tr>
                    <th>Factor</th>
                    <th>Layer</th>
                    <th className="num">Weight</th>
                    <th className="num">Share</th>
                    <th>Curve</th>
                  </tr>
                </thead>
                <tbody>
                  {methods.factors.map((f) => (
                    <tr key={f.factor}>
                      <td>{f.label}</td>
                      <td>{f.layer}</td>
                      <td className="num">{f.weight}</td>
                      <td className="num">{pct(f.share)}</td>
                      <td>{f.curve}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
              {methods.ahp ? (
                <p>
                  The weights come from pairwise judgements by the Analytic Hierarchy Process over {methods.ahp.factors.join(", ")}; consistency ratio {num(methods.ahp.consistencyRatio, 3)}{" "}
                  ({methods.ahp.consistencyRatio <= 0.1 ? "acceptable, ≤ 0.10" : "above 0.10: the judgements should be revised"}) — {report.citations.ahp}
                </p>
              ) : (
                <p>The weights were set directly (no pairwise judgements were saved with this version).</p>
              )}
              {s.scoring?.target.kind === "period" ? (
                <p>
                  Period {s.scoring.target.name} ({s.scoring.target.youngKa}–{s.scoring.target.oldKa} ka BP): the time-weighted mean of the per-age occupation, ages when a cell was sea or lake counting as{" "}
                  {s.scoring.target.rule === "zero" ? "zero" : "absent"} (decision record docs/decisions/401-period-rule.md).
                  {st?.ageWeights?.length ? ` Age weights: ${st.ageWeights.map((a) => `${a.ageKa} ka ${num(a.weight, 2)}`).join(", ")}.` : ""}
                </p>
              ) : (
                <p>A single age, {s.scoring?.targetLabel}: no period combination.</p>
              )}
              <p>
                Preservation {methods.preservation.enabled ? "on" : "off"}: a weighted mean of position below local base level (TPI, weight {methods.preservation.baseLevel.weight}), time in
                the shoreface erosion zone (erosion depth {methods.preservation.shorefaceErosion.erosionDepthM} m ÷ rise rate at flooding, weight {methods.preservation.shorefaceErosion.weight})
                and shelter when the cell drowned (radius {methods.shelterRadiusM} m, weight {methods.preservation.shelter.weight}); cores and interpretations within{" "}
                {methods.preservation.evidenceRadiusM} m override it; potential = occupation × preservation (decision record docs/decisions/402-weighing.md).
              </p>
            </>
          ) : (
            <p>The model's method (features, folds, metrics) is set out in its model card; the weighting methods do not apply.</p>
          )}
          {classification ? (
            <p>
              Classes ({classification.kind === "quantile" ? "thresholds frozen from quantiles" : "fixed thresholds"}):{" "}
              {classification.labels.map((l, c) => `${l} ${c === 0 ? `≥ ${classification.thresholds[0]}` : c < classification.thresholds.length ? `${classification.thresholds[c]}–${classification.thresholds[c - 1]}` : `< ${classification.thresholds[c - 1]}`}`).join("; ")}.
            </p>
          ) : (
            <p>{report.classificationProblem}</p>
          )}
        </section>

        <section aria-labelledby="r-maps">
          <h2 id="r-maps">4. Maps</h2>
          {report.maps.length ? (
            report.maps.map((m) => (
              <figure key={m}>
                <img src={`/api/reviews/${review.id}/map.png?layer=${m}`} alt={`Map of the ${m} of scoring ${s.scoring!.id}, ${s.scoring!.targetLabel}`} data-testid={`map-${m}`} />
                <figcaption>
                  <strong>Figure {++fig}.</strong> {m === "potential" ? "Site potential" : m === "occupation" ? "Occupation (before preservation)" : "Preservation score"}, {s.scoring!.targetLabel}, scoring #{s.scoring!.id}, drawn on the
                  server from its published raster (SHA-256 <span className="hash">{s.scoring!.files.find((f) => f.name === m)?.sha256.slice(0, 16)}…</span>, checked against the snapshot). North up;
                  sea and lake transparent.
                  <span className="legend">
                    0 <span className="ramp" aria-hidden="true" /> 1{m !== "occupation" && s.scoring!.files.some((f) => f.name === "unassessed") ? <> · <span className="hatch" aria-hidden="true" /> unassessed (unknown, not low)</> : null}
                  </span>
                </figcaption>
              </figure>
            ))
          ) : report.modelMap === "shown" && s.subject.kind === "model" ? (
            <figure>
              <img src={`/api/reviews/${review.id}/map.png?layer=probability`} alt={`Map of the probability of trained model ${s.subject.model.name || `#${s.subject.model.id}`}`} data-testid="map-probability" />
              <figcaption>
                <strong>Figure {++fig}.</strong> Probability of presence, trained model “{s.subject.model.name || `#${s.subject.model.id}`}” (share of trees), drawn on the server from its published raster
                (SHA-256 <span className="hash">{s.subject.model.files.find((f) => f.name === "probability")?.sha256.slice(0, 16)}…</span>, checked against the snapshot). North up; the sea transparent. The
                model peaks on the sites it was trained on: this figure is not for distribution below analyst.
                <span className="legend">
                  0 <span className="ramp" aria-hidden="true" /> 1
                </span>
              </figcaption>
            </figure>
          ) : report.modelMap === "withheld" ? (
            <p className="not-available" data-testid="map-withheld">
              The trained model&apos;s map is shown to analysts, leads, owners and reviewers only: it peaks on exact site positions.
            </p>
          ) : (
            <NotAvailable what="A map of this review's subject" />
          )}
          {classes ? (
            <>
              <h3>Area by class (frozen classification, occupiable cells)</h3>
              <table data-testid="class-areas">
                <thead>
                  <tr>
                    <th>Class</th>
                    <th className="num">From</th>
                    <th className="num">Below</th>
                    <th className="num">Area</th>
                    <th className="num">Share</th>
                  </tr>
                </thead>
                <tbody>
                  {classes.map((c) => (
                    <tr key={c.label}>
                      <td>{c.label}</td>
                      <td className="num">{c.from ?? "—"}</td>
                      <td className="num">{c.to ?? "—"}</td>
                      <td className="num">{km2(c.areaKm2)}</td>
                      <td className="num">{pct(c.share)}</td>
                    </tr>
                  ))}
                  {st ? (
                    <tr>
                      <td>unassessed</td>
                      <td className="num">—</td>
                      <td className="num">—</td>
                      <td className="num">{km2(st.unassessed.areaKm2)}</td>
                      <td className="num">{st.occupiable.areaKm2 > 0 ? pct(st.unassessed.areaKm2 / st.occupiable.areaKm2) : "—"}</td>
                    </tr>
                  ) : null}
                </tbody>
              </table>
              {st ? (
                <p>
                  Potential over {st.potential.cells} scored cells: mean {num(st.potential.mean)}, median {num(st.potential.median)}, range {num(st.potential.min)}–{num(st.potential.max)}.
                </p>
              ) : null}
            </>
          ) : report.classesProblem ? (
            <p>{report.classesProblem}</p>
          ) : null}
          {st?.notes.length ? (
            <ul>
              {st.notes.map((n) => (
                <li key={n}>{n}</li>
              ))}
            </ul>
          ) : null}
        </section>

        <section aria-labelledby="r-conflicts">
          <h2 id="r-conflicts">5. Conflict table</h2>
          <ConflictSection report={report} />
        </section>

        <section aria-labelledby="r-blocks">
          <h2 id="r-blocks">6. Lease-block figures</h2>
          <BlocksSection report={report} />
        </section>

        <section aria-labelledby="r-uncertainty">
          <h2 id="r-uncertainty">7. Uncertainty</h2>
          <UncertaintySection report={report} />
        </section>

        <section aria-labelledby="r-zones">
          <h2 id="r-zones">8. Mitigation and exclusion zones</h2>
          <ZonesSection report={report} />
        </section>

        <section aria-labelledby="r-decision">
          <h2 id="r-decision">9. Decision and signature</h2>
          {review.signature ? (
            <div className="signature" data-testid="report-signature">
              <p>
                <strong>Decision: {review.decisionWords}.</strong>
              </p>
              {review.conditions.length ? (
                <>
                  <p>Conditions:</p>
                  <ol>
                    {review.conditions.map((c, i) => (
                      <li key={i}>
                        {i + 1}. {c}
                      </li>
                    ))}
                  </ol>
                </>
              ) : null}
              {review.decisionNote ? <p style={{ whiteSpace: "pre-wrap" }}>{review.decisionNote}</p> : null}
              <p>
                Signed by {review.signature.name} at {review.signature.at ? formatUtc(review.signature.at, true) : ""} UTC, by re-entering their password, over snapshot hash{" "}
                <span className="hash">{review.snapshotHash}</span>.
              </p>
              <p>
                Signature digest (SHA-256 over the review id, snapshot hash, decision, conditions, note, signer and time): <span className="hash">{review.signature.digest}</span>
              </p>
            </div>
          ) : (
            <p className="not-available">Not decided yet: this report is a draft until a reviewer signs the decision.</p>
          )}
        </section>

        <section aria-labelledby="r-cautions" className="cautions">
          <h2 id="r-cautions">10. Cautions</h2>
          <Cautions />
        </section>
      </article>
    </>
  );
}
