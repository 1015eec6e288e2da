// Trained models of the project (design §4 "trained alternative"): the list, and the form that
// trains one. models.read only (owner, lead, analyst, reviewer): a model peaks on exact site
// positions, so viewers neither see this page nor its link. A refusal for too few sites is shown
// here with the numbers and what was left out, before anything is queued.
import { Form, Link, redirect, useActionData, useNavigation } from "react-router";
import { data } from "react-router";
import { requireProjectAccess } from "~/permissions.server";
import { listReconstructions } from "~/reconstructions.server";
import { DEFAULT_MODEL_SETTINGS, listModels, ModelRefused, modelRequest, startModel } from "~/models.server";
import { formAction, parseForm } from "~/route-helpers.server";
import { can } from "~/permissions";
import { formatUtc } from "~/format";
import { ChoiceField, FormProblemNote, PrimaryButton } from "~/components/forms/Field";
import { StatusBadge } from "~/components/StatusBadge";
import { Cautions } from "~/components/Cautions";
import { ModelRefusal, type RefusalNumbers } from "~/components/models/ModelRefusal";
import type { Manifest } from "~/terrain/reconstruct";
import type { Route } from "./+types/project-models";

export const meta = () => [{ title: "Models · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "models.read");
  const [rows, recs] = await Promise.all([listModels(project.id), listReconstructions(project.id)]);
  return {
    projectId: project.id,
    mayStart: can(role, "runs.start"),
    models: rows.map((m) => ({
      id: m.id,
      name: m.name,
      status: m.effectiveStatus,
      progress: m.run?.fraction ?? 0,
      ageKa: (m.params as { ageKa?: number }).ageKa ?? null,
      reconstructionName: m.reconstructionName || `Reconstruction ${m.reconstructionId}`,
      auc: ((m.card as { folds?: { auc?: { mean?: number | null } } } | null)?.folds?.auc?.mean ?? null) as number | null,
      createdAt: m.createdAt.toISOString(),
    })),
    reconstructions: recs
      .filter((r) => r.effectiveStatus === "published" && r.manifest)
      .map((r) => ({ id: r.id, name: r.name || `Reconstruction ${r.id}`, agesKa: [...(r.manifest as unknown as Manifest).agesKa].sort((a, b) => b - a) })),
    defaults: DEFAULT_MODEL_SETTINGS,
  };
}

const num = (v: FormDataEntryValue | null) => (v === null || String(v).trim() === "" ? undefined : Number(String(v).replace(",", ".")));

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "runs.start");
  const form = await request.formData();
  return formAction(async () => {
    const settings = Object.fromEntries(
      (["trees", "minSites", "folds", "blockSizeM", "backgroundCells", "backgroundPerPresence", "surveyCorridorM", "coreRadiusM"] as const).map((k) => [k, num(form.get(k))]).filter(([, v]) => v !== undefined),
    );
    const req = parseForm(modelRequest, {
      reconstructionId: num(form.get("reconstructionId")),
      ...(String(form.get("name") ?? "").trim() ? { name: String(form.get("name")) } : {}),
      ...(num(form.get("ageKa")) !== undefined ? { ageKa: num(form.get("ageKa")) } : {}),
      settings,
    });
    try {
      const { model } = await startModel(project, identity.user.id, req, { clientAddress: context?.clientAddress });
      throw redirect(`/projects/${project.id}/models/${model.id}`);
    } catch (e) {
      if (e instanceof ModelRefused) return data({ error: e.message, refusal: e.detail as RefusalNumbers }, { status: 422 });
      throw e;
    }
  });
}

export default function ProjectModels({ loaderData }: Route.ComponentProps) {
  const { projectId, models, mayStart, reconstructions, defaults } = loaderData;
  const problem = useActionData<typeof action>() as { error?: string; refusal?: RefusalNumbers } | undefined;
  const busy = useNavigation().state === "submitting";
  return (
    <div className="max-w-5xl space-y-6">
      <h1 className="text-2xl font-semibold">Models</h1>
      <p className="max-w-3xl text-sm text-sediment-700">
        A random forest learns the factor values of known in-situ sites and cores with archaeological material against ground that was searched, and predicts a probability at
        one age. It is checked by spatial-block cross-validation before it is trusted. Trained on exact site positions, it is shown to analysts, leads, owners and reviewers only.
      </p>
      {models.length === 0 ? (
        <p className="text-sm text-sediment-600">No models yet.</p>
      ) : (
        <table className="w-full text-sm">
          <thead className="border-b border-sand-300 text-left text-xs uppercase tracking-wide text-sediment-600">
            <tr>
              <th className="py-1 pr-4">Name</th>
              <th className="py-1 pr-4">Age</th>
              <th className="py-1 pr-4">Reconstruction</th>
              <th className="py-1 pr-4">Out-of-fold AUC</th>
              <th className="py-1 pr-4">Status</th>
              <th className="py-1">Started</th>
            </tr>
          </thead>
          <tbody>
            {models.map((m) => (
              <tr key={m.id} className="border-b border-sand-100">
                <td className="py-1.5 pr-4">
                  <Link className="font-medium text-deep-800 underline" to={`/projects/${projectId}/models/${m.id}`}>
                    {m.name}
                  </Link>
                </td>
                <td className="py-1.5 pr-4 tabular-nums">{m.ageKa} ka</td>
                <td className="py-1.5 pr-4">{m.reconstructionName}</td>
                <td className="py-1.5 pr-4 tabular-nums">{m.auc === null ? "—" : m.auc.toFixed(2)}</td>
                <td className="py-1.5 pr-4">
                  <StatusBadge status={m.status} progress={m.progress} />
                </td>
                <td className="py-1.5 text-xs tabular-nums">{formatUtc(m.createdAt)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}

      {problem?.refusal ? <ModelRefusal message={problem.error ?? ""} numbers={problem.refusal} /> : null}

      {mayStart ? (
        reconstructions.length === 0 ? (
          <p className="text-sm">
            A model trains on a published reconstruction: start one on the <Link className="underline" to={`/projects/${projectId}/reconstructions`}>Reconstructions</Link> page.
          </p>
        ) : (
          <Form method="post" className="grid max-w-4xl gap-4 rounded-md border border-sand-200 bg-white p-4 md:grid-cols-3">
            <h2 className="font-semibold md:col-span-3">Train a model</h2>
            {problem?.error && !problem.refusal ? (
              <div className="md:col-span-3">
                <FormProblemNote message={problem.error} />
              </div>
            ) : null}
            <ChoiceField label="Reconstruction" name="reconstructionId" items={reconstructions} />
            <label className="text-sm">
              <span className="block font-medium">Age of the raster (ka BP)</span>
              <input name="ageKa" placeholder="where most sites are" inputMode="decimal" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5 tabular-nums" />
              <span className="text-xs text-sediment-600">One of {reconstructions[0]?.agesKa.join(", ")} ka; empty: the age most presences are compared at.</span>
            </label>
            <label className="text-sm">
              <span className="block font-medium">Name (optional)</span>
              <input name="name" maxLength={120} className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
            </label>
            {(
              [
                ["trees", "Trees", defaults.trees, "More trees, steadier votes; slower."],
                ["minSites", "Minimum presences", defaults.minSites, "Refused below this many in-situ sites and cores with material (at least 5)."],
                ["folds", "Cross-validation folds", defaults.folds, "Whole blocks go to one fold."],
                ["blockSizeM", "Block size (m)", defaults.blockSizeM, "Larger than the distance over which factors stay alike."],
                ["backgroundCells", "Background cells (at most)", defaults.backgroundCells, "Drawn from searched ground that was land at each site's age."],
                ["backgroundPerPresence", "Background per presence", defaults.backgroundPerPresence, "The background is kept near this many cells per presence (at least 100): forests do better on a down-sampled background."],
                ["surveyCorridorM", "Survey-line corridor (m)", defaults.surveyCorridorM, "Ground either side of a line counted as searched."],
                ["coreRadiusM", "Cored-area radius (m)", defaults.coreRadiusM, "Ground around each core counted as searched; dredging areas count whole."],
              ] as const
            ).map(([name, label, def, hint]) => (
              <label key={name} className="text-sm">
                <span className="block font-medium">{label}</span>
                <input name={name} defaultValue={def} inputMode="decimal" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5 tabular-nums" />
                <span className="text-xs text-sediment-600">{hint}</span>
              </label>
            ))}
            <div className="flex items-end md:col-span-3">
              <PrimaryButton type="submit" disabled={busy}>
                {busy ? "Starting…" : "Train"}
              </PrimaryButton>
            </div>
          </Form>
        )
      ) : null}
      <Cautions compact />
    </div>
  );
}
