// The project's weight sets: which one is adopted (and why), each set's current version, and the way
// to start a new set or fork one. Editing, history, comparison and scoring happen on a set's own
// page, beside the map.
import { Link, useNavigate } from "react-router";
import { useState } from "react";
import { requireProjectAccess } from "~/permissions.server";
import { can } from "~/permissions";
import { adoptionHistory, listWeightSets } from "~/weight-sets.server";
import { formatUtc } from "~/format";
import { PrimaryButton } from "~/components/forms/Field";
import type { Route } from "./+types/project-weight-sets";

export const meta = () => [{ title: "Weights · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const [sets, adoptions] = await Promise.all([listWeightSets(project.id), adoptionHistory(project.id)]);
  return {
    projectId: project.id,
    mayEdit: can(role, "weights.edit"),
    sets: sets.map((s) => ({
      id: s.id,
      name: s.name,
      description: s.description,
      currentVersion: s.currentVersion,
      updatedAt: s.updatedAt,
      by: s.version.createdBy?.name ?? "—",
      note: s.version.note,
      versionId: s.version.id,
      forkedFrom: s.forkedFrom ? `${s.forkedFrom.name} v${s.forkedFrom.version}` : null,
      adopted: s.adopted ? { version: s.adopted.version, rationale: s.adopted.rationale, by: s.adopted.adoptedBy?.name ?? "—", at: s.adopted.adoptedAt } : null,
      weighted: s.version.content.factors.filter((f) => f.weight > 0).length,
    })),
    adoptions: adoptions.slice(0, 10),
  };
}

async function problemOf(res: Response): Promise<string> {
  try {
    const body = (await res.json()) as { error?: { message?: string } };
    return body.error?.message ?? `The request failed (${res.status}).`;
  } catch {
    return `The request failed (${res.status}).`;
  }
}

export default function WeightSets({ loaderData }: Route.ComponentProps) {
  const { projectId, mayEdit, sets, adoptions } = loaderData;
  const navigate = useNavigate();
  const [problem, setProblem] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  const create = async (body: Record<string, unknown>) => {
    setBusy(true);
    setProblem(null);
    const res = await fetch(`/api/projects/${projectId}/weight-sets`, { method: "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify(body) });
    setBusy(false);
    if (!res.ok) return setProblem(await problemOf(res));
    const { weightSet } = (await res.json()) as { weightSet: { id: number } };
    navigate(`/projects/${projectId}/weights/${weightSet.id}`);
  };

  const adopted = sets.find((s) => s.adopted);
  return (
    <div className="max-w-5xl space-y-6">
      <header>
        <h1 className="text-2xl font-semibold">Weights</h1>
        <p className="mt-1 text-sm text-sediment-700">
          A weight set says which landscape factors make a good place to have lived, how much each counts, and through which curve; the preservation model then asks whether traces would survive. Every save is
          kept as a version. A lead adopts one version as the project&apos;s.
        </p>
      </header>

      <section aria-labelledby="adopted-h" className="rounded-sm border-l-4 border-ember-500 bg-white p-3">
        <h2 id="adopted-h" className="text-sm font-semibold">Adopted for the project</h2>
        {adopted?.adopted ? (
          <p className="mt-1 text-sm" data-testid="adopted">
            <Link className="font-semibold underline" to={`/projects/${projectId}/weights/${adopted.id}`}>
              {adopted.name}
            </Link>{" "}
            version {adopted.adopted.version}, adopted by {adopted.adopted.by} on {formatUtc(adopted.adopted.at)}: “{adopted.adopted.rationale}”
          </p>
        ) : (
          <p className="mt-1 text-sm text-sediment-700">No weight set is adopted yet. A lead adopts one from its page.</p>
        )}
      </section>

      <section aria-labelledby="sets-h">
        <h2 id="sets-h" className="mb-2 text-lg font-semibold">Weight sets</h2>
        {sets.length === 0 ? (
          <p className="text-sm text-sediment-700">No weight sets yet. {mayEdit ? "Start one below from the catalogue's starting curves." : "An analyst or lead starts one."}</p>
        ) : (
          <table className="w-full text-sm">
            <thead className="text-left text-xs text-sediment-600">
              <tr>
                <th className="py-1">Name</th>
                <th>Version</th>
                <th>Factors weighted</th>
                <th>Last saved</th>
                <th>Why</th>
                {mayEdit ? <th className="sr-only">Fork</th> : null}
              </tr>
            </thead>
            <tbody>
              {sets.map((s) => (
                <tr key={s.id} className="border-t border-sand-200 align-top">
                  <td className="py-1.5 pr-2">
                    <Link to={`/projects/${projectId}/weights/${s.id}`} className="font-semibold underline decoration-sand-400">
                      {s.name}
                    </Link>
                    {s.adopted ? <span className="ml-2 rounded-sm bg-ember-100 px-1 text-xs text-ember-900">adopted v{s.adopted.version}</span> : null}
                    {s.forkedFrom ? <div className="text-xs text-sediment-600">forked from {s.forkedFrom}</div> : null}
                    {s.description ? <div className="text-xs text-sediment-700">{s.description}</div> : null}
                  </td>
                  <td className="tabular-nums">v{s.currentVersion}</td>
                  <td className="tabular-nums">{s.weighted}</td>
                  <td className="text-xs">
                    {formatUtc(s.updatedAt)}
                    <br />
                    {s.by}
                  </td>
                  <td className="text-xs text-sediment-700">{s.note || "—"}</td>
                  {mayEdit ? (
                    <td>
                      <button type="button" disabled={busy} className="rounded-sm border border-sand-300 bg-white px-2 py-0.5 text-xs" onClick={() => create({ name: `${s.name} (fork)`.slice(0, 80), forkFromVersionId: s.versionId, note: `Forked from ${s.name} v${s.currentVersion}` })}>
                        Fork
                      </button>
                    </td>
                  ) : null}
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>

      {mayEdit ? (
        <section aria-labelledby="new-h" className="rounded-sm border border-sand-200 bg-white p-3">
          <h2 id="new-h" className="text-sm font-semibold">Start a weight set</h2>
          <form
            className="mt-2 flex flex-wrap items-end gap-2"
            onSubmit={(e) => {
              e.preventDefault();
              const f = new FormData(e.currentTarget);
              void create({ name: String(f.get("name") ?? ""), description: String(f.get("description") ?? ""), note: "Started from the catalogue's curves" });
            }}
          >
            <label className="flex flex-col text-xs">
              Name
              <input name="name" required maxLength={80} className="w-56 rounded-sm border border-sand-300 px-2 py-1 text-sm" />
            </label>
            <label className="flex flex-1 flex-col text-xs">
              What it stands for (optional)
              <input name="description" maxLength={1000} className="rounded-sm border border-sand-300 px-2 py-1 text-sm" />
            </label>
            <PrimaryButton type="submit" disabled={busy}>
              Start
            </PrimaryButton>
          </form>
        </section>
      ) : null}
      {problem ? (
        <p role="alert" className="text-sm text-caution-800">
          {problem}
        </p>
      ) : null}

      {adoptions.length ? (
        <section aria-labelledby="adoptions-h">
          <h2 id="adoptions-h" className="mb-1 text-sm font-semibold">Adoptions</h2>
          <ul className="space-y-1 text-xs text-sediment-700">
            {adoptions.map((a) => (
              <li key={a.id}>
                {formatUtc(a.adoptedAt)} · {a.adoptedBy?.name ?? "—"} adopted {a.name} v{a.version}: “{a.rationale}”
              </li>
            ))}
          </ul>
        </section>
      ) : null}
    </div>
  );
}
