// The member's own proposal: direct weights and curve control points, or AHP judgements over the
// session's factors. Edits show at once here and are sent a moment after the last keystroke; the
// group result and everyone else's screens follow from the saved proposal's event.
import { useEffect, useRef, useState } from "react";
import { factorDef, type FactorId } from "~/scoring/factors";
import type { WeightSetContent } from "~/scoring/weight-set";
import { ahpWeights, CONSISTENCY_RATIO_LIMIT, matrixFromUpperTriangle } from "~/scoring/ahp";
import { postJson } from "./api";

const SAATY = [9, 8, 7, 6, 5, 4, 3, 2, 1, 1 / 2, 1 / 3, 1 / 4, 1 / 5, 1 / 6, 1 / 7, 1 / 8, 1 / 9];
const label = (id: FactorId) => factorDef(id)?.label ?? id;
const fmtJudgement = (v: number) => (v >= 1 ? String(Math.round(v)) : `1/${Math.round(1 / v)}`);

type Status = { kind: "idle" } | { kind: "saving" } | { kind: "saved"; at: string } | { kind: "problem"; message: string };

export function ProposalEditor({
  sessionId,
  method,
  ahpFactors,
  start,
  hasProposal,
}: {
  sessionId: number;
  method: "direct" | "ahp";
  ahpFactors: FactorId[];
  /** the member's saved proposal, or the session's base */
  start: WeightSetContent;
  hasProposal: boolean;
}) {
  const [draft, setDraft] = useState<WeightSetContent>(() => {
    if (method === "ahp" && (!start.ahp || start.ahp.factors.join() !== ahpFactors.join())) {
      const n = ahpFactors.length;
      return { ...start, ahp: { factors: ahpFactors, upper: new Array((n * (n - 1)) / 2).fill(1) } };
    }
    return start;
  });
  const [status, setStatus] = useState<Status>({ kind: "idle" });
  const [made, setMade] = useState(hasProposal);
  const timer = useRef<ReturnType<typeof setTimeout> | undefined>(undefined);
  const latest = useRef(draft);

  const send = async (content: WeightSetContent) => {
    setStatus({ kind: "saving" });
    const body = method === "ahp" ? { content: { ...content, ahp: null }, upper: content.ahp!.upper } : { content };
    const r = await postJson<{ proposal: { updatedAt: string } }>(`/api/weighing-sessions/${sessionId}/proposal`, body);
    if (latest.current !== content) return; // a newer edit is on its way
    setStatus(r.ok ? { kind: "saved", at: r.data.proposal.updatedAt } : { kind: "problem", message: r.message });
    if (r.ok) setMade(true);
  };

  const change = (next: WeightSetContent) => {
    setDraft(next);
    latest.current = next;
    clearTimeout(timer.current);
    timer.current = setTimeout(() => void send(next), 250);
  };
  useEffect(() => () => clearTimeout(timer.current), []);

  if (!made)
    return (
      <div className="space-y-2 text-sm">
        <p>You have no proposal in this session yet. Yours starts from the session's starting weights; change it as you see fit.</p>
        <button type="button" className="rounded-sm bg-deep-800 px-3 py-1.5 text-sm font-medium text-sand-50 hover:bg-deep-700" onClick={() => void send(draft)}>
          Make my proposal
        </button>
        {status.kind === "problem" ? <p role="alert" className="text-caution-800">{status.message}</p> : null}
      </div>
    );

  return (
    <div className="space-y-3" data-testid="my-proposal">
      {method === "direct" ? <DirectEditor draft={draft} onChange={change} /> : <AhpEditor draft={draft} factors={ahpFactors} onChange={change} />}
      <p className="text-xs" role="status" aria-live="polite">
        {status.kind === "saving" ? "Saving…" : status.kind === "saved" ? "Saved: everyone in the session sees it." : status.kind === "problem" ? <span className="text-caution-800">Not saved: {status.message}</span> : "Changes are saved as you make them."}
      </p>
    </div>
  );
}

function DirectEditor({ draft, onChange }: { draft: WeightSetContent; onChange: (c: WeightSetContent) => void }) {
  const total = draft.factors.reduce((a, f) => a + (Number.isFinite(f.weight) ? f.weight : 0), 0);
  const setFactor = (i: number, patch: Partial<WeightSetContent["factors"][number]>) =>
    onChange({ ...draft, factors: draft.factors.map((f, k) => (k === i ? { ...f, ...patch } : f)) });
  return (
    <table className="w-full text-sm">
      <thead className="text-left text-xs uppercase tracking-wide text-sediment-600">
        <tr>
          <th className="py-1 pr-2">Factor</th>
          <th className="py-1 pr-2">Weight</th>
          <th className="py-1 pr-2">Share</th>
          <th className="py-1">Curve</th>
        </tr>
      </thead>
      <tbody>
        {draft.factors.map((f, i) => {
          const def = factorDef(f.factor);
          const params = Object.entries(f.curve).filter(([, v]) => typeof v === "number") as [string, number][];
          return (
            <tr key={f.factor} className="border-t border-sand-100 align-top">
              <td className="py-1 pr-2">{def?.label ?? f.factor}</td>
              <td className="py-1 pr-2">
                <input
                  type="number"
                  min={0}
                  step={0.5}
                  value={Number.isFinite(f.weight) ? f.weight : ""}
                  aria-label={`My weight for ${def?.label ?? f.factor}`}
                  className="w-20 rounded-sm border border-sand-300 px-1.5 py-0.5 tabular-nums"
                  onChange={(e) => setFactor(i, { weight: e.target.value === "" ? NaN : Number(e.target.value) })}
                />
              </td>
              <td className="py-1 pr-2 tabular-nums text-sediment-600">{total > 0 && Number.isFinite(f.weight) ? `${((f.weight / total) * 100).toFixed(0)} %` : "–"}</td>
              <td className="py-1">
                <details>
                  <summary className="cursor-pointer text-xs text-sediment-600">{f.curve.kind}{"direction" in f.curve ? `, ${f.curve.direction}` : ""}</summary>
                  <div className="mt-1 flex flex-wrap gap-2">
                    {params.map(([k, v]) => (
                      <label key={k} className="text-xs">
                        {k} ({def?.units ?? ""})
                        <input
                          type="number"
                          value={Number.isFinite(v) ? v : ""}
                          aria-label={`${def?.label ?? f.factor}: curve ${k}`}
                          className="ml-1 w-20 rounded-sm border border-sand-300 px-1 py-0.5 tabular-nums"
                          onChange={(e) => setFactor(i, { curve: { ...f.curve, [k]: e.target.value === "" ? NaN : Number(e.target.value) } as typeof f.curve })}
                        />
                      </label>
                    ))}
                  </div>
                </details>
              </td>
            </tr>
          );
        })}
      </tbody>
    </table>
  );
}

function AhpEditor({ draft, factors, onChange }: { draft: WeightSetContent; factors: FactorId[]; onChange: (c: WeightSetContent) => void }) {
  const upper = draft.ahp!.upper;
  const n = factors.length;
  const pairs: { i: number; j: number; k: number }[] = [];
  for (let i = 0, k = 0; i < n; i++) for (let j = i + 1; j < n; j++) pairs.push({ i, j, k: k++ });
  let result: ReturnType<typeof ahpWeights> | null = null;
  try {
    result = ahpWeights(matrixFromUpperTriangle(n, upper));
  } catch {
    result = null;
  }
  return (
    <div className="space-y-2 text-sm">
      <ul className="space-y-1">
        {pairs.map(({ i, j, k }) => (
          <li key={k} className="flex flex-wrap items-center gap-2">
            <span className="w-56 text-right">{label(factors[i])}</span>
            <select
              aria-label={`${label(factors[i])} against ${label(factors[j])}`}
              value={String(SAATY.findIndex((v) => Math.abs(v - upper[k]) < 1e-6))}
              className="rounded-sm border border-sand-300 bg-white px-1.5 py-0.5"
              onChange={(e) => {
                const next = [...upper];
                next[k] = SAATY[Number(e.target.value)];
                onChange({ ...draft, ahp: { factors, upper: next } });
              }}
            >
              {SAATY.map((v, idx) => (
                <option key={idx} value={idx}>
                  {v === 1 ? "equally important (1)" : v > 1 ? `left more important (${fmtJudgement(v)})` : `right more important (${fmtJudgement(v)})`}
                </option>
              ))}
            </select>
            <span className="w-56">{label(factors[j])}</span>
          </li>
        ))}
      </ul>
      {result ? (
        <p className="text-xs">
          My weights: {factors.map((f, i) => `${label(f)} ${(result!.weights[i] * 100).toFixed(0)} %`).join(" · ")}. Consistency ratio{" "}
          <span className={result.consistencyRatio > CONSISTENCY_RATIO_LIMIT ? "font-semibold text-caution-800" : ""}>{result.consistencyRatio.toFixed(3)}</span>
          {result.consistencyRatio > CONSISTENCY_RATIO_LIMIT ? " — above 0.10 (Saaty 1980): the judgements contradict each other; revise them." : " (0.10 or below is acceptable, Saaty 1980)."}
        </p>
      ) : null}
    </div>
  );
}
