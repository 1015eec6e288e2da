// Weighing sessions of the project: the list (open ones first to join), and for leads the form that
// starts one — direct weights, or AHP judgements over chosen factors — from a weight-set version.
import { Form, Link, redirect, useActionData, useNavigation } from "react-router";
import { useState } from "react";
import { requireProjectAccess } from "~/permissions.server";
import { listSessions, startSession } from "~/weighing-sessions.server";
import { listWeightSets } from "~/weight-sets.server";
import { formAction } from "~/route-helpers.server";
import { can } from "~/permissions";
import { FACTORS } from "~/scoring/factors";
import { formatUtc } from "~/format";
import { FormProblemNote, PrimaryButton } from "~/components/forms/Field";
import type { Route } from "./+types/project-sessions";

export const meta = () => [{ title: "Weighing sessions · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const mayStart = can(role, "weights.adopt");
  const sessions = await listSessions(project.id);
  const sets = mayStart ? await listWeightSets(project.id) : [];
  return {
    projectId: project.id,
    mayStart,
    sessions,
    versions: sets.map((s) => ({ id: s.version.id, name: `${s.name} · version ${s.version.version}${s.adopted?.versionId === s.version.id ? " (adopted)" : ""}` })),
  };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "weights.adopt");
  const form = await request.formData();
  return formAction(async () => {
    const base = String(form.get("baseVersionId") ?? "");
    const s = await startSession(
      project.id,
      {
        title: String(form.get("title") ?? ""),
        method: String(form.get("method") ?? ""),
        ahpFactors: form.getAll("ahpFactors").map(String),
        baseVersionId: base === "" ? null : Number(base),
      },
      { userId: identity.user.id, clientAddress: context?.clientAddress },
    );
    throw redirect(`/projects/${project.id}/weighing/${s.id}`);
  });
}

export default function ProjectSessions({ loaderData }: Route.ComponentProps) {
  const { projectId, mayStart, sessions, versions } = loaderData;
  const problem = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  const [method, setMethod] = useState<"direct" | "ahp">("direct");
  const p = problem && "error" in problem ? problem : null;
  return (
    <div className="max-w-5xl space-y-6">
      <header>
        <h1 className="text-2xl font-semibold">Weighing sessions</h1>
        <p className="mt-1 max-w-3xl text-sm text-sediment-600">
          The team weighs the factors together: each member who edits weights holds a proposal, everyone sees every change as it is made, the group result and the spread of
          opinion update live, and a lead adopts the outcome as a weight-set version with the reason.
        </p>
      </header>
      {sessions.length === 0 ? (
        <p className="text-sm text-sediment-600">No sessions yet.{mayStart ? " Start one below and invite the team to join from this page." : " A lead starts one; it appears here."}</p>
      ) : (
        <table className="w-full text-sm">
          <thead className="border-b border-sand-300 text-left text-xs uppercase tracking-wide text-sediment-600">
            <tr>
              <th className="py-1 pr-4">Session</th>
              <th className="py-1 pr-4">Method</th>
              <th className="py-1 pr-4">Proposals</th>
              <th className="py-1 pr-4">State</th>
              <th className="py-1">Started (UTC)</th>
            </tr>
          </thead>
          <tbody>
            {sessions.map((s) => (
              <tr key={s.id} className="border-b border-sand-100">
                <td className="py-1.5 pr-4">
                  <Link className="font-medium text-deep-800 underline" to={`/projects/${projectId}/weighing/${s.id}`}>
                    {s.title}
                  </Link>
                </td>
                <td className="py-1.5 pr-4">{s.method === "ahp" ? "AHP judgements" : "direct weights"}</td>
                <td className="py-1.5 pr-4 tabular-nums">{s.proposals}</td>
                <td className="py-1.5 pr-4">
                  {s.status === "open" ? (
                    <span className="rounded-sm bg-ember-300/40 px-1.5 py-0.5 text-xs font-medium text-ember-700">open · join</span>
                  ) : s.outcome ? (
                    `closed · ${s.outcome.weightSetName} v${s.outcome.version}${s.outcome.adopted ? " adopted" : ""}`
                  ) : (
                    "closed without an outcome"
                  )}
                </td>
                <td className="py-1.5 text-xs tabular-nums">
                  {formatUtc(s.startedAt)} {s.startedBy ? `by ${s.startedBy.name}` : ""}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {mayStart ? (
        <Form method="post" className="grid max-w-4xl gap-4 rounded-md border border-sand-200 bg-white p-4 md:grid-cols-2">
          <h2 className="font-semibold md:col-span-2">Start a session</h2>
          <div className="md:col-span-2">
            <FormProblemNote message={p?.error} />
          </div>
          <label className="text-sm">
            <span className="block font-medium">Title</span>
            <input name="title" required maxLength={120} placeholder="e.g. Coastal factors before the spring survey" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
          </label>
          <label className="text-sm">
            <span className="block font-medium">Start every proposal from</span>
            <select name="baseVersionId" defaultValue="" className="mt-1 block w-full rounded-sm border border-sand-300 bg-white px-2 py-1.5">
              <option value="">the project's adopted weight set (or the starting weights)</option>
              {versions.map((v) => (
                <option key={v.id} value={v.id}>
                  {v.name}
                </option>
              ))}
            </select>
          </label>
          <fieldset className="text-sm md:col-span-2">
            <legend className="font-medium">How members weigh</legend>
            <div className="mt-1 flex flex-wrap gap-4">
              <label className="flex items-center gap-1.5">
                <input type="radio" name="method" value="direct" checked={method === "direct"} onChange={() => setMethod("direct")} /> direct weights and curves (group: mean of normalised weights)
              </label>
              <label className="flex items-center gap-1.5">
                <input type="radio" name="method" value="ahp" checked={method === "ahp"} onChange={() => setMethod("ahp")} /> AHP pairwise judgements (group: geometric mean, Aczél &amp; Saaty 1983)
              </label>
            </div>
          </fieldset>
          {method === "ahp" ? (
            <fieldset className="text-sm md:col-span-2">
              <legend className="font-medium">Factors to compare (2 to 10)</legend>
              <div className="mt-1 grid grid-cols-2 gap-1 md:grid-cols-3">
                {FACTORS.map((f) => (
                  <label key={f.id} className="flex items-center gap-1.5">
                    <input type="checkbox" name="ahpFactors" value={f.id} defaultChecked={f.defaultWeight >= 2} /> {f.label}
                  </label>
                ))}
              </div>
            </fieldset>
          ) : null}
          <div className="md:col-span-2">
            <PrimaryButton type="submit" disabled={busy}>
              {busy ? "Starting…" : "Start the session"}
            </PrimaryButton>
          </div>
        </Form>
      ) : null}
    </div>
  );
}
