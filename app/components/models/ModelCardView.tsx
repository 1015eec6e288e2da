// A trained model's card (design §4, issue 10): inputs, sample counts, parameters, out-of-fold
// metrics from spatial-block cross-validation with their spread, training time, and the notes that
// say what the probability is and is not. Counts only — never a site's position or id.
import { factorDef, type FactorId } from "~/scoring/factors";

type Spread = { mean: number | null; sd: number | null; min: number | null; max: number | null; finiteFolds: number };
export interface CardJson {
  method: string;
  library: string;
  inputs: FactorId[];
  samples: { presences: number; sites: number; cores: number; background: number; backgroundWithoutValues: number; excluded: Record<string, number>; capped: { presences: number; background: number } | null };
  parameters: Record<string, number>;
  folds: {
    k: number;
    blockSizeM: number;
    presences: number;
    background: number;
    folds: { fold: number; testPresences: number; testBackground: number; auc: number | null; gain: (number | null)[] }[];
    auc: Spread;
    pooledAuc: number | null;
    gain: Spread[];
    classLabels: string[];
    thresholds: number[];
    areaShareFrom: string;
  } | null;
  trainingMs: number;
  totalMs?: number;
  notes: string[];
  heldOut?: number;
  undated?: number;
  outsideAges?: number;
  ages?: { model: number; chosen: boolean; presencesPerAge: { ageKa: number; presences: number }[] };
  background?: { requested: number; drawn: { ageKa: number; requested: number; available: number; drawn: number }[]; searchedGround: { cells: number; areaKm2: number; surveyLines: number; cores: number; surveyCorridorM: number; coreRadiusM: number; dredgingAreas?: number; dredgedAreaCells?: number; targetResults?: number }; rule: string };
  crossValidation?: { k: number; blockSizeM: number; blocks: number; blocksWithPresences: number };
  dataNotes?: string[];
}

const f2 = (v: number | null | undefined) => (v === null || v === undefined || !Number.isFinite(v) ? "—" : v.toFixed(2));
const spreadText = (s: Spread) => (s.mean === null || !Number.isFinite(s.mean) ? "—" : `${f2(s.mean)} ± ${f2(s.sd)} (${f2(s.min)}–${f2(s.max)}, ${s.finiteFolds} folds)`);

export function ModelCardView({ card }: { card: CardJson }) {
  const s = card.samples;
  const cv = card.folds;
  return (
    <div className="space-y-4 text-sm" data-testid="model-card">
      <section aria-labelledby="card-metrics" className="rounded-md border border-sand-200 bg-white p-4">
        <h2 id="card-metrics" className="font-semibold">
          Out-of-fold performance
        </h2>
        {cv ? (
          <>
            <p className="mt-1">
              ROC AUC <span className="font-semibold tabular-nums" data-testid="cv-auc">{spreadText(cv.auc)}</span>; all out-of-fold predictions together {f2(cv.pooledAuc)}.
            </p>
            <p className="text-xs text-sediment-600">
              {cv.k} folds of whole {cv.blockSizeM} m blocks (no block in two folds); {cv.presences} presences and {cv.background} background cells. Gain's area shares
              come from {cv.areaShareFrom}.
            </p>
            <table className="mt-2 text-sm">
              <thead className="text-left text-xs uppercase tracking-wide text-sediment-600">
                <tr>
                  <th className="pr-4">Class</th>
                  <th className="pr-4">Kvamme's gain, mean ± SD (range, folds)</th>
                </tr>
              </thead>
              <tbody>
                {cv.classLabels.map((l, c) => (
                  <tr key={l}>
                    <td className="pr-4">{l}</td>
                    <td className="tabular-nums">{spreadText(cv.gain[c])}</td>
                  </tr>
                ))}
              </tbody>
            </table>
            <table className="mt-2 text-xs">
              <thead className="text-left uppercase tracking-wide text-sediment-600">
                <tr>
                  <th className="pr-3">Fold</th>
                  <th className="pr-3">Held-out presences</th>
                  <th className="pr-3">Held-out background</th>
                  <th>AUC</th>
                </tr>
              </thead>
              <tbody>
                {cv.folds.map((f) => (
                  <tr key={f.fold} className="tabular-nums">
                    <td className="pr-3">{f.fold + 1}</td>
                    <td className="pr-3">{f.testPresences}</td>
                    <td className="pr-3">{f.testBackground}</td>
                    <td>{f2(f.auc)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </>
        ) : (
          <p>No cross-validation was run.</p>
        )}
      </section>

      <section aria-labelledby="card-samples" className="rounded-md border border-sand-200 bg-white p-4">
        <h2 id="card-samples" className="font-semibold">
          What it was trained on
        </h2>
        <p className="mt-1">
          <span className="tabular-nums" data-testid="card-presences">{s.presences}</span> presences ({s.sites} in-situ {s.sites === 1 ? "site" : "sites"}, {s.cores} {s.cores === 1 ? "core" : "cores"} with archaeological material) against{" "}
          <span className="tabular-nums">{s.background}</span> background cells from searched ground.
          {s.capped ? ` Capped from ${s.capped.presences} presences and ${s.capped.background} background cells.` : ""}
        </p>
        {Object.keys(s.excluded).length || card.heldOut ? (
          <ul className="mt-1 list-disc pl-5">
            {Object.entries(s.excluded).map(([r, n]) => (
              <li key={r}>
                {r} — {n} left out
              </li>
            ))}
            {card.heldOut ? <li>held out — {card.heldOut} {card.heldOut === 1 ? "site" : "sites"} kept for validation</li> : null}
          </ul>
        ) : null}
        {card.undated ? <p className="mt-1 text-xs">{card.undated} presences without a calibrated date were compared at the model's age.</p> : null}
        {card.ages ? (
          <p className="mt-1 text-xs">
            Presences per age: {card.ages.presencesPerAge.map((a) => `${a.presences} at ${a.ageKa} ka`).join(", ")}. The raster is predicted at {card.ages.model} ka
            {card.ages.chosen ? " (the age most presences are compared at)" : ""}.
          </p>
        ) : null}
        {card.background ? (
          <p className="mt-1 text-xs">
            Searched ground: {searchedGroundText(card.background.searchedGround)} {card.background.rule}
          </p>
        ) : null}
        <p className="mt-2">Factors: {card.inputs.map((f) => factorDef(f)?.label ?? f).join(", ")}.</p>
      </section>

      <section aria-labelledby="card-params" className="rounded-md border border-sand-200 bg-white p-4">
        <h2 id="card-params" className="font-semibold">
          How it was set
        </h2>
        <p className="mt-1">{card.method}</p>
        <dl className="mt-2 grid grid-cols-2 gap-x-4 gap-y-0.5 text-xs md:grid-cols-4">
          {[
            ["trees", card.parameters.trees],
            ["factors per tree", card.parameters.featuresPerTree],
            ["deepest split", card.parameters.maxDepth],
            ["sample cap", card.parameters.maxSamples],
            ["minimum presences", card.parameters.minPresences],
            ["seed", card.parameters.seed],
            ["training", `${card.trainingMs} ms`],
            ...(card.totalMs !== undefined ? [["whole job", `${(card.totalMs / 1000).toFixed(1)} s`]] : []),
          ].map(([k, v]) => (
            <div key={String(k)} className="flex justify-between gap-2 border-b border-sand-100">
              <dt className="text-sediment-600">{k}</dt>
              <dd className="tabular-nums">{v}</dd>
            </div>
          ))}
        </dl>
        <p className="mt-1 text-xs text-sediment-600">{card.library}</p>
      </section>

      <ul className="list-disc space-y-0.5 pl-5 text-xs text-sediment-700">
        {[...card.notes, ...(card.dataNotes ?? [])].map((n) => (
          <li key={n}>{n}</li>
        ))}
      </ul>
    </div>
  );
}

/** Where the background came from, in words: survey-line corridors, cored discs and dredging areas. */
function searchedGroundText(g: NonNullable<CardJson["background"]>["searchedGround"]): string {
  const parts = [`${g.surveyLines} survey line${g.surveyLines === 1 ? "" : "s"} (corridor ${g.surveyCorridorM} m)`];
  const results = g.targetResults ? `, ${g.targetResults} of them recorded on target lists` : "";
  parts.push(`${g.cores} core${g.cores === 1 ? "" : "s"}${results} (radius ${g.coreRadiusM} m)`);
  if (g.dredgingAreas) parts.push(`${g.dredgingAreas} dredging or other searched area${g.dredgingAreas === 1 ? "" : "s"}`);
  const last = parts.pop()!;
  return `${g.areaKm2.toFixed(1)} km² from ${parts.length ? `${parts.join(", ")} and ${last}` : last}.`;
}
