// Weights from pairwise judgements (AHP, Saaty 1980): the person says, pair by pair, which factor
// matters more and how much on Saaty's 1–9 scale; the weights are the principal eigenvector and the
// consistency ratio says whether the judgements hang together. Above 0.10 the weights are shown but
// not applied until the judgements are revised (decision 402).
import { useMemo, useState } from "react";
import { ahpWeights, matrixFromUpperTriangle, CONSISTENCY_RATIO_LIMIT } from "~/scoring/ahp";
import { factorDef, type FactorId } from "~/scoring/factors";
import { ScoringInputError } from "~/scoring/errors";
import type { AhpJudgements, WeightSetContent } from "~/scoring/weight-set";

const SCALE: Array<{ v: number; words: string }> = [
  { v: 9, words: "extremely more" },
  { v: 7, words: "very strongly more" },
  { v: 5, words: "strongly more" },
  { v: 3, words: "moderately more" },
  { v: 1, words: "equally" },
  { v: 1 / 3, words: "moderately less" },
  { v: 1 / 5, words: "strongly less" },
  { v: 1 / 7, words: "very strongly less" },
  { v: 1 / 9, words: "extremely less" },
];

const nearestScale = (v: number) => SCALE.reduce((best, s) => (Math.abs(Math.log(s.v) - Math.log(v)) < Math.abs(Math.log(best.v) - Math.log(v)) ? s : best), SCALE[4]);

export function AhpPanel({ content, onApply, editable }: { content: WeightSetContent; onApply: (next: WeightSetContent) => void; editable: boolean }) {
  const weighted = content.factors.filter((f) => f.weight > 0).map((f) => f.factor);
  const [chosen, setChosen] = useState<FactorId[]>(() => (content.ahp ? content.ahp.factors : weighted.slice(0, 10)));
  const [upper, setUpper] = useState<number[]>(() => (content.ahp && content.ahp.factors.join() === chosen.join() ? content.ahp.upper : new Array((chosen.length * (chosen.length - 1)) / 2).fill(1)));
  const n = chosen.length;

  const choose = (ids: FactorId[]) => {
    setChosen(ids);
    setUpper(new Array((ids.length * (ids.length - 1)) / 2).fill(1));
  };

  const outcome = useMemo(() => {
    if (n < 2) return { error: "Choose at least two factors to compare." } as const;
    try {
      const labels = chosen.map((id) => factorDef(id)?.label ?? id);
      const r = ahpWeights(matrixFromUpperTriangle(n, upper, labels), labels);
      return { result: r } as const;
    } catch (e) {
      if (e instanceof ScoringInputError) return { error: e.message } as const;
      throw e;
    }
  }, [chosen, upper, n]);

  const pairs: Array<[number, number, number]> = [];
  let k = 0;
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) pairs.push([i, j, k++]);

  const apply = () => {
    if (!("result" in outcome) || !outcome.result) return;
    const w = outcome.result.weights;
    const ahp: AhpJudgements = { factors: chosen, upper };
    onApply({
      ...content,
      ahp,
      factors: content.factors.map((f) => {
        const idx = chosen.indexOf(f.factor);
        return { ...f, weight: idx >= 0 ? Number((w[idx] * 10).toFixed(4)) : 0 };
      }),
    });
  };

  const cr = "result" in outcome && outcome.result ? outcome.result.consistencyRatio : null;
  return (
    <div className="space-y-3 text-sm" data-testid="ahp-panel">
      <p className="text-xs text-sediment-700">
        Compare the factors two at a time (Saaty&apos;s 1–9 scale). The weights are the principal eigenvector of the judgements; the consistency ratio (CR) should stay at or below {CONSISTENCY_RATIO_LIMIT.toFixed(2)}.
      </p>
      <fieldset>
        <legend className="text-xs font-semibold">Factors compared ({n}, at most 10)</legend>
        <div className="mt-1 flex flex-wrap gap-x-3 gap-y-1">
          {content.factors.map((f) => {
            const on = chosen.includes(f.factor);
            return (
              <label key={f.factor} className="flex items-center gap-1 text-xs">
                <input type="checkbox" disabled={!editable || (!on && n >= 10)} checked={on} onChange={() => choose(on ? chosen.filter((c) => c !== f.factor) : [...chosen, f.factor])} />
                {factorDef(f.factor)?.label}
              </label>
            );
          })}
        </div>
      </fieldset>
      {pairs.length ? (
        <table className="w-full text-xs">
          <tbody>
            {pairs.map(([i, j, idx]) => (
              <tr key={`${chosen[i]}-${chosen[j]}`} className="border-b border-sand-200">
                <td className="py-1 pr-1">{factorDef(chosen[i])?.label}</td>
                <td className="py-1">
                  <select
                    aria-label={`${factorDef(chosen[i])?.label} compared with ${factorDef(chosen[j])?.label}`}
                    disabled={!editable}
                    className="rounded-sm border border-sand-300 bg-white px-1 py-0.5"
                    value={String(nearestScale(upper[idx] ?? 1).v)}
                    onChange={(e) => setUpper((u) => u.map((x, q) => (q === idx ? Number(e.target.value) : x)))}
                  >
                    {SCALE.map((s) => (
                      <option key={s.v} value={String(s.v)}>
                        {s.words} important ({s.v >= 1 ? s.v : `1/${Math.round(1 / s.v)}`})
                      </option>
                    ))}
                  </select>
                </td>
                <td className="py-1 pl-1">than {factorDef(chosen[j])?.label}</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
      {"error" in outcome ? (
        <p role="alert" className="text-xs text-caution-800">{outcome.error}</p>
      ) : (
        <div>
          <table className="text-xs tabular-nums">
            <tbody>
              {chosen.map((id, i) => (
                <tr key={id}>
                  <td className="pr-3">{factorDef(id)?.label}</td>
                  <td>{(outcome.result.weights[i] * 100).toFixed(1)} %</td>
                </tr>
              ))}
            </tbody>
          </table>
          <p className={`mt-1 text-xs ${cr !== null && cr > CONSISTENCY_RATIO_LIMIT ? "font-semibold text-caution-800" : "text-sediment-700"}`} data-testid="ahp-cr" role={cr !== null && cr > CONSISTENCY_RATIO_LIMIT ? "alert" : undefined}>
            λmax {outcome.result.lambdaMax.toFixed(3)} · CR {outcome.result.consistencyRatio.toFixed(3)}
            {cr !== null && cr > CONSISTENCY_RATIO_LIMIT ? ` — above ${CONSISTENCY_RATIO_LIMIT.toFixed(2)}: the judgements contradict each other. Revise them before using these weights.` : " — consistent enough."}
          </p>
          {editable ? (
            <button type="button" disabled={cr === null || cr > CONSISTENCY_RATIO_LIMIT} onClick={apply} className="mt-2 rounded-sm border border-deep-700 bg-deep-800 px-2 py-1 text-xs text-sand-50 disabled:opacity-40">
              Use these weights
            </button>
          ) : null}
          <p className="mt-1 text-[11px] text-sediment-600">Using them sets the compared factors&apos; weights and turns the others off; the judgements are saved with the weight set.</p>
        </div>
      )}
    </div>
  );
}
