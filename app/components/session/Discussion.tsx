// The session's discussion: remarks in order, each optionally about one factor; everyone but
// viewers may add one.
import { useState } from "react";
import { formatUtc } from "~/format";
import { factorDef, type FactorId } from "~/scoring/factors";
import type { CommentView } from "./session-state";
import { postJson } from "./api";

export function Discussion({ sessionId, comments, factors, mayComment, open }: { sessionId: number; comments: CommentView[]; factors: FactorId[]; mayComment: boolean; open: boolean }) {
  const [body, setBody] = useState("");
  const [factor, setFactor] = useState("");
  const [problem, setProblem] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const submit = async (e: React.FormEvent) => {
    e.preventDefault();
    setBusy(true);
    const r = await postJson(`/api/weighing-sessions/${sessionId}/comments`, { body, factor: factor || null });
    setBusy(false);
    if (r.ok) {
      setBody("");
      setProblem(null);
    } else setProblem(r.message);
  };
  return (
    <div className="space-y-3">
      {comments.length === 0 ? <p className="text-sm text-sediment-600">No remarks yet.</p> : null}
      <ol className="space-y-2" data-testid="discussion">
        {comments.map((c) => (
          <li key={c.id} className="rounded-sm border border-sand-200 bg-white px-3 py-2 text-sm">
            <p className="text-xs text-sediment-600">
              <span className="font-medium text-sediment-800">{c.name}</span> · {formatUtc(c.createdAt)} UTC
              {c.factor ? <span className="ml-1 rounded-sm bg-sand-100 px-1">on {factorDef(c.factor)?.label ?? c.factor}</span> : null}
            </p>
            <p className="whitespace-pre-wrap">{c.body}</p>
          </li>
        ))}
      </ol>
      {open && mayComment ? (
        <form onSubmit={submit} className="space-y-2">
          <label className="block text-sm">
            <span className="font-medium">Add a remark</span>
            <textarea value={body} onChange={(e) => setBody(e.target.value)} maxLength={2000} rows={2} className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
          </label>
          <div className="flex flex-wrap items-center gap-2 text-sm">
            <label>
              about{" "}
              <select value={factor} onChange={(e) => setFactor(e.target.value)} className="rounded-sm border border-sand-300 bg-white px-1.5 py-0.5">
                <option value="">the session as a whole</option>
                {factors.map((f) => (
                  <option key={f} value={f}>
                    {factorDef(f)?.label ?? f}
                  </option>
                ))}
              </select>
            </label>
            <button type="submit" disabled={busy || !body.trim()} className="rounded-sm border border-sand-300 bg-white px-2.5 py-1 text-sm hover:bg-sand-100 disabled:opacity-60">
              Post
            </button>
          </div>
          {problem ? <p role="alert" className="text-sm text-caution-800">{problem}</p> : null}
        </form>
      ) : null}
    </div>
  );
}
