// The project classification for leads and owners: fixed thresholds, or thresholds frozen from the
// quantiles of a published scoring's potential. Saved through PUT /api/projects/:id/classification;
// a refusal is shown with the server's words and nothing changes.
import { useState } from "react";
import { FormProblemNote, PrimaryButton } from "~/components/forms/Field";
import type { ValidationSubjectOption } from "./types";

export interface ClassificationShown {
  kind: "fixed" | "quantile";
  thresholds: number[];
  labels: string[];
  classes: { label: string; from: number; to: number }[];
  shares?: number[];
  achievedShares?: number[];
  frozenFrom?: { scoringId: number; reference: string; frozenAt: string };
}

async function problemOf(res: Response): Promise<string> {
  try {
    const body = (await res.json()) as { error?: { message?: string } };
    return body.error?.message ?? `The request failed (${res.status}).`;
  } catch {
    return `The request failed (${res.status}).`;
  }
}

const list = (s: string) => s.split(/[,;\s]+/).filter(Boolean).map(Number);

export function ClassificationView({ c }: { c: ClassificationShown }) {
  return (
    <div className="text-sm" data-testid="classification">
      <p>
        {c.kind === "fixed" ? "Fixed thresholds" : `Quantile classes frozen from ${c.frozenFrom?.reference ?? "a scoring"}`}:{" "}
        {c.classes.map((k, i) => (
          <span key={k.label} className="tabular-nums">
            {i ? " · " : ""}
            {k.label} {k.from.toFixed(2)}–{k.to.toFixed(2)}
            {c.achievedShares ? ` (${(c.achievedShares[i] * 100).toFixed(1)} % of its cells)` : ""}
          </span>
        ))}
      </p>
      <p className="text-xs text-sediment-600">The one classification used by gain, block figures, sensitivity and core targets. Unassessed ground is a class of its own, never low.</p>
    </div>
  );
}

export function ClassificationEditor({ projectId, current, scorings, onSaved }: { projectId: number; current: ClassificationShown; scorings: ValidationSubjectOption[]; onSaved: (c: ClassificationShown) => void }) {
  const [kind, setKind] = useState<"fixed" | "quantile">(current.kind);
  const [thresholds, setThresholds] = useState(current.thresholds.join(", "));
  const [labels, setLabels] = useState(current.labels.join(", "));
  const [shares, setShares] = useState((current.shares ?? [0.4, 0.3, 0.2, 0.1]).join(", "));
  const [scoringId, setScoringId] = useState<number | "">(scorings[0]?.id ?? "");
  const [problem, setProblem] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  const save = async (e: React.FormEvent) => {
    e.preventDefault();
    setProblem(null);
    const names = labels.split(",").map((s) => s.trim()).filter(Boolean);
    const body =
      kind === "fixed"
        ? { kind, thresholds: list(thresholds), ...(names.length ? { labels: names } : {}) }
        : { kind, scoringId: Number(scoringId), shares: list(shares), ...(names.length ? { labels: names } : {}) };
    setBusy(true);
    const res = await fetch(`/api/projects/${projectId}/classification`, { method: "PUT", headers: { "Content-Type": "application/json" }, body: JSON.stringify(body) });
    setBusy(false);
    if (!res.ok) return setProblem(await problemOf(res));
    onSaved(((await res.json()) as { classification: ClassificationShown }).classification);
  };

  return (
    <form onSubmit={save} className="space-y-2 text-sm" aria-label="Change the project classification">
      <fieldset className="flex gap-4">
        <legend className="sr-only">How the classes are set</legend>
        <label className="flex items-center gap-1">
          <input type="radio" name="kind" checked={kind === "fixed"} onChange={() => setKind("fixed")} /> fixed thresholds
        </label>
        <label className="flex items-center gap-1">
          <input type="radio" name="kind" checked={kind === "quantile"} onChange={() => setKind("quantile")} disabled={!scorings.length} /> shares of a scoring's area (frozen)
        </label>
      </fieldset>
      {kind === "fixed" ? (
        <label className="block">
          <span className="block text-xs text-sediment-600">Thresholds, lowest first, between 0 and 1 (e.g. 0.25, 0.5, 0.75)</span>
          <input className="w-full rounded-sm border border-sand-300 px-2 py-1" value={thresholds} onChange={(e) => setThresholds(e.target.value)} aria-label="Thresholds, lowest first" />
        </label>
      ) : (
        <>
          <label className="block">
            <span className="block text-xs text-sediment-600">Scoring whose potential the thresholds are frozen from</span>
            <select className="w-full rounded-sm border border-sand-300 px-2 py-1" value={scoringId} onChange={(e) => setScoringId(Number(e.target.value))} aria-label="Reference scoring">
              {scorings.map((s) => (
                <option key={s.id} value={s.id}>
                  {s.label}
                </option>
              ))}
            </select>
          </label>
          <label className="block">
            <span className="block text-xs text-sediment-600">Share of the area in each class, lowest first, adding up to 1 (e.g. 0.4, 0.3, 0.2, 0.1)</span>
            <input className="w-full rounded-sm border border-sand-300 px-2 py-1" value={shares} onChange={(e) => setShares(e.target.value)} aria-label="Shares, lowest first" />
          </label>
        </>
      )}
      <label className="block">
        <span className="block text-xs text-sediment-600">Class names, lowest first, separated by commas (optional)</span>
        <input className="w-full rounded-sm border border-sand-300 px-2 py-1" value={labels} onChange={(e) => setLabels(e.target.value)} aria-label="Class names, lowest first" />
      </label>
      <FormProblemNote message={problem} />
      <PrimaryButton type="submit" disabled={busy}>
        {busy ? "Saving…" : "Save the classification"}
      </PrimaryButton>
    </form>
  );
}
