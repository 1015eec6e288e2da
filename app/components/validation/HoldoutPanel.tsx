// The hold-out set for leads and owners: which known sites are kept from the team's validation
// while weights are tuned, and revealing it (or hiding it again) — both recorded in the audit log.
import { useState } from "react";
import { FormProblemNote, PrimaryButton, QuietButton } from "~/components/forms/Field";

export interface HoldoutShown {
  revealedAt: string | null;
  heldOut: number;
  sites: { id: number; label: string; context: string; calBpFrom: number | null; calBpTo: number | null; heldOut: boolean }[];
}

async function problemOf(res: Response): Promise<string> {
  try {
    const body = (await res.json()) as { error?: { message?: string } };
    return body.error?.message ?? `The request failed (${res.status}).`;
  } catch {
    return `The request failed (${res.status}).`;
  }
}

export function HoldoutPanel({ projectId, initial, onChanged }: { projectId: number; initial: HoldoutShown; onChanged: () => void }) {
  const [state, setState] = useState(initial);
  const [chosen, setChosen] = useState(() => new Set(initial.sites.filter((s) => s.heldOut).map((s) => s.id)));
  const [problem, setProblem] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  const send = async (method: "PUT" | "POST", body: unknown) => {
    setBusy(true);
    setProblem(null);
    const res = await fetch(`/api/projects/${projectId}/holdout`, { method, headers: { "Content-Type": "application/json" }, body: JSON.stringify(body) });
    setBusy(false);
    if (!res.ok) return setProblem(await problemOf(res));
    const { holdout } = (await res.json()) as { holdout: HoldoutShown };
    setState(holdout);
    setChosen(new Set(holdout.sites.filter((s) => s.heldOut).map((s) => s.id)));
    onChanged();
  };

  const inSitu = state.sites.filter((s) => s.context === "in_situ");
  return (
    <div className="space-y-2 text-sm" data-testid="holdout-panel">
      <p>
        {state.heldOut} site{state.heldOut === 1 ? "" : "s"} held out;{" "}
        {state.revealedAt ? <strong>revealed to the team on {new Date(state.revealedAt).toISOString().slice(0, 16).replace("T", " ")} UTC</strong> : "hidden from the team's validation."}
      </p>
      <fieldset>
        <legend className="text-xs text-sediment-600">In-situ sites to hold out (the team sees only how many)</legend>
        <ul className="mt-1 max-h-48 space-y-0.5 overflow-auto">
          {inSitu.map((s) => (
            <li key={s.id}>
              <label className="flex items-center gap-2">
                <input
                  type="checkbox"
                  checked={chosen.has(s.id)}
                  onChange={(e) => {
                    const next = new Set(chosen);
                    if (e.target.checked) next.add(s.id);
                    else next.delete(s.id);
                    setChosen(next);
                  }}
                />
                {s.label} <span className="text-xs text-sediment-600 tabular-nums">{s.calBpFrom !== null ? `${s.calBpFrom}–${s.calBpTo} cal BP` : "undated"}</span>
              </label>
            </li>
          ))}
        </ul>
      </fieldset>
      <FormProblemNote message={problem} />
      <div className="flex flex-wrap gap-2">
        <PrimaryButton type="button" disabled={busy} onClick={() => send("PUT", { siteIds: [...chosen] })}>
          Save the hold-out
        </PrimaryButton>
        {state.revealedAt ? (
          <QuietButton type="button" disabled={busy} onClick={() => send("POST", { action: "hide" })}>
            Hide it again
          </QuietButton>
        ) : (
          <QuietButton type="button" disabled={busy || state.heldOut === 0} onClick={() => send("POST", { action: "reveal" })}>
            Reveal the hold-out to the team
          </QuietButton>
        )}
      </div>
      <p className="text-xs text-sediment-600">Saving a changed set hides it again. Every change and every reveal is recorded in the audit log.</p>
    </div>
  );
}
