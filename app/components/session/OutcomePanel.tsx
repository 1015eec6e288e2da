// For leads: adopt the group result or one proposal as a new weight-set version (or a new set) with
// the reason, optionally as the project's adopted weight set — which closes the session — or close
// the session without an outcome.
import { useState } from "react";
import type { ProposalView } from "./session-state";
import { postJson } from "./api";

export function OutcomePanel({
  sessionId,
  proposals,
  weightSets,
  groupProblem,
}: {
  sessionId: number;
  proposals: ProposalView[];
  weightSets: { id: number; name: string; currentVersion: number }[];
  groupProblem: string | null;
}) {
  const [source, setSource] = useState("group");
  const [target, setTarget] = useState(weightSets[0] ? String(weightSets[0].id) : "new");
  const [newName, setNewName] = useState("");
  const [rationale, setRationale] = useState("");
  const [adoptForProject, setAdoptForProject] = useState(true);
  const [problem, setProblem] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  const adopt = async (e: React.FormEvent) => {
    e.preventDefault();
    setBusy(true);
    const set = weightSets.find((w) => String(w.id) === target);
    const r = await postJson(`/api/weighing-sessions/${sessionId}/outcome`, {
      source: source === "group" ? "group" : Number(source),
      target: set ? { weightSetId: set.id, expectedVersion: set.currentVersion } : { newName },
      rationale,
      adoptForProject,
    });
    setBusy(false);
    setProblem(r.ok ? null : r.message);
  };
  const close = async () => {
    if (!window.confirm("Close the session without adopting anything? It becomes a read-only record.")) return;
    const r = await postJson(`/api/weighing-sessions/${sessionId}/close`, {});
    setProblem(r.ok ? null : r.message);
  };

  return (
    <form onSubmit={adopt} className="space-y-3 text-sm" aria-label="Outcome">
      <div className="grid gap-3 md:grid-cols-2">
        <label>
          <span className="block font-medium">Adopt</span>
          <select value={source} onChange={(e) => setSource(e.target.value)} className="mt-1 block w-full rounded-sm border border-sand-300 bg-white px-2 py-1.5">
            <option value="group">the group result{groupProblem ? " (not available yet)" : ""}</option>
            {proposals.map((p) => (
              <option key={p.userId} value={p.userId}>
                {p.name}'s proposal
              </option>
            ))}
          </select>
        </label>
        <label>
          <span className="block font-medium">as a new version of</span>
          <select value={target} onChange={(e) => setTarget(e.target.value)} className="mt-1 block w-full rounded-sm border border-sand-300 bg-white px-2 py-1.5">
            {weightSets.map((w) => (
              <option key={w.id} value={w.id}>
                {w.name} (now version {w.currentVersion})
              </option>
            ))}
            <option value="new">a new weight set…</option>
          </select>
        </label>
        {target === "new" ? (
          <label>
            <span className="block font-medium">Name of the new weight set</span>
            <input value={newName} onChange={(e) => setNewName(e.target.value)} maxLength={80} className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
          </label>
        ) : null}
      </div>
      <label className="block">
        <span className="block font-medium">Rationale (kept with the version and in the audit log)</span>
        <textarea value={rationale} onChange={(e) => setRationale(e.target.value)} maxLength={1000} rows={2} className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
      </label>
      <label className="flex items-center gap-1.5">
        <input type="checkbox" checked={adoptForProject} onChange={(e) => setAdoptForProject(e.target.checked)} /> also make it the project's adopted weight set
      </label>
      {problem ? <p role="alert" className="rounded-sm border-l-4 border-caution-600 bg-caution-100 px-3 py-2 text-caution-800">{problem}</p> : null}
      <div className="flex gap-2">
        <button type="submit" disabled={busy} className="rounded-sm bg-deep-800 px-3 py-1.5 font-medium text-sand-50 hover:bg-deep-700 disabled:opacity-60">
          {busy ? "Adopting…" : "Adopt and close the session"}
        </button>
        <button type="button" onClick={() => void close()} className="rounded-sm border border-caution-600 bg-white px-2.5 py-1 text-caution-800 hover:bg-caution-100">
          Close without an outcome
        </button>
      </div>
    </form>
  );
}
