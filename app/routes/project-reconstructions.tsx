// Reconstructions of the project: the list, and the form that starts one.
import { formatUtc } from "~/format";
import { Form, Link, redirect, useActionData, useNavigation } from "react-router";
import { asc, eq } from "drizzle-orm";
import { requireProjectAccess } from "~/permissions.server";
import { listReconstructions, parseAges, reconstructionParams, startReconstruction } from "~/reconstructions.server";
import { listDatasets } from "~/datasets.server";
import { db } from "~/db.server";
import { seaLevelCurves } from "~/db/schema";
import { formAction, parseForm } from "~/route-helpers.server";
import { can } from "~/permissions";
import { ChoiceField, FormProblemNote, PrimaryButton } from "~/components/forms/Field";
import { StatusBadge } from "~/components/StatusBadge";
import type { Route } from "./+types/project-reconstructions";

export const meta = () => [{ title: "Reconstructions · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const [runs, data, curves] = await Promise.all([
    listReconstructions(project.id),
    listDatasets(project.id),
    db().select({ id: seaLevelCurves.id, name: seaLevelCurves.name }).from(seaLevelCurves).where(eq(seaLevelCurves.projectId, project.id)).orderBy(asc(seaLevelCurves.name)),
  ]);
  const of = (kind: string) => data.filter((d) => d.kind === kind).map((d) => ({ id: d.id, name: d.name }));
  return {
    projectId: project.id,
    mayStart: can(role, "runs.start"),
    runs: runs.map((r) => ({
      id: r.id,
      name: r.name || `Reconstruction ${r.id}`,
      status: r.effectiveStatus,
      ages: ((r.params as { agesKa?: number[] }).agesKa ?? []).join(", "),
      progress: r.run?.fraction ?? 0,
      createdAt: r.createdAt.toISOString(),
    })),
    bathymetry: of("bathymetry"),
    horizons: of("horizon_picks"),
    lines: of("survey_lines"),
    curves,
  };
}

const num = (v: FormDataEntryValue | null) => (v === null || v === "" ? undefined : Number(String(v).replace(",", ".")));
const idOrNull = (v: FormDataEntryValue | null) => (v === null || v === "" ? null : Number(v));

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "runs.start");
  const form = await request.formData();
  return formAction(async () => {
    const p = parseForm(reconstructionParams, {
      name: String(form.get("name") ?? ""),
      bathymetryDatasetId: idOrNull(form.get("bathymetryDatasetId")) ?? undefined,
      horizonDatasetId: idOrNull(form.get("horizonDatasetId")),
      surveyLinesDatasetId: idOrNull(form.get("surveyLinesDatasetId")),
      curveId: idOrNull(form.get("curveId")),
      agesKa: parseAges(String(form.get("ages") ?? "")),
      oceanSides: form.getAll("oceanSides").map(String),
      tidalRangeM: num(form.get("tidalRangeM")),
      streamThresholdKm2: num(form.get("streamThresholdKm2")),
      ...(num(form.get("unassessedBeyondM")) !== undefined ? { unassessedBeyondM: num(form.get("unassessedBeyondM")) } : {}),
    });
    const { reconstruction } = await startReconstruction(project, identity.user.id, p, { clientAddress: context?.clientAddress });
    throw redirect(`/projects/${project.id}/reconstructions/${reconstruction.id}`);
  });
}

export default function ProjectReconstructions({ loaderData }: Route.ComponentProps) {
  const { projectId, runs, mayStart, bathymetry, horizons, lines, curves } = loaderData;
  const problem = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  const p = problem && "error" in problem ? problem : null;
  return (
    <div className="max-w-5xl space-y-6">
      <h1 className="text-2xl font-semibold">Reconstructions</h1>
      {runs.length === 0 ? (
        <p className="text-sm text-sediment-600">None yet.{mayStart ? " Choose the inputs below to reconstruct the landscape at the ages you need." : ""}</p>
      ) : (
        <table className="w-full text-sm">
          <thead className="border-b border-sand-300 text-left text-xs uppercase tracking-wide text-sediment-600">
            <tr>
              <th className="py-1 pr-4">Name</th>
              <th className="py-1 pr-4">Ages (ka BP)</th>
              <th className="py-1 pr-4">Status</th>
              <th className="py-1">Started</th>
            </tr>
          </thead>
          <tbody>
            {runs.map((r) => (
              <tr key={r.id} className="border-b border-sand-100">
                <td className="py-1.5 pr-4">
                  <Link className="font-medium text-deep-800 underline" to={`/projects/${projectId}/reconstructions/${r.id}`}>
                    {r.name}
                  </Link>
                </td>
                <td className="py-1.5 pr-4 tabular-nums">{r.ages}</td>
                <td className="py-1.5 pr-4">
                  <StatusBadge status={r.status} progress={r.progress} />
                </td>
                <td className="py-1.5 text-xs tabular-nums">{formatUtc(r.createdAt)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}

      {mayStart ? (
        bathymetry.length === 0 ? (
          <p className="text-sm">
            Upload a bathymetry grid on the <Link className="underline" to={`/projects/${projectId}/data`}>Data</Link> page first.
          </p>
        ) : (
          <Form method="post" className="grid max-w-4xl gap-4 rounded-md border border-sand-200 bg-white p-4 md:grid-cols-2">
            <h2 className="font-semibold md:col-span-2">New reconstruction</h2>
            <div className="md:col-span-2">
              <FormProblemNote message={p?.error} />
            </div>
            <label className="text-sm">
              <span className="block font-medium">Name (optional)</span>
              <input name="name" maxLength={120} className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
            </label>
            <ChoiceField label="Bathymetry grid" name="bathymetryDatasetId" items={bathymetry} />
            <ChoiceField
              label="Buried horizon (sub-bottom picks)"
              name="horizonDatasetId"
              items={horizons}
              none="none: analyse today's seabed"
              hint="Hydrology on today's seabed follows sandwave troughs and scour; a horizon is the better surface where there is one."
            />
            <ChoiceField label="Survey lines (for distance to the nearest line)" name="surveyLinesDatasetId" items={lines} none="none" />
            <ChoiceField label="Sea-level curve" name="curveId" items={curves} none="shipped global curve (global, far-field approximation)" />
            <label className="text-sm">
              <span className="block font-medium">Ages (ka BP)</span>
              <input name="ages" defaultValue="20, 16, 14, 12, 10, 8" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5 tabular-nums" />
              <span className="text-xs text-sediment-600">Comma-separated, e.g. one per 500 years or per 2 m of rise.</span>
            </label>
            <fieldset className="text-sm">
              <legend className="font-medium">Open ocean lies to the</legend>
              <div className="mt-1 flex gap-3">
                {(["north", "east", "south", "west"] as const).map((s) => (
                  <label key={s} className="flex items-center gap-1">
                    <input type="checkbox" name="oceanSides" value={s} defaultChecked={s === "south"} /> {s}
                  </label>
                ))}
              </div>
              <span className="text-xs text-sediment-600">Where the palaeo-sea connects to the grid: flooding spreads from there, not from every edge.</span>
            </fieldset>
            <label className="text-sm">
              <span className="block font-medium">Palaeo-tidal range (m)</span>
              <input name="tidalRangeM" defaultValue="2" inputMode="decimal" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
            </label>
            <label className="text-sm">
              <span className="block font-medium">Stream threshold (km² contributing area)</span>
              <input name="streamThresholdKm2" defaultValue="0.5" inputMode="decimal" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
            </label>
            <label className="text-sm">
              <span className="block font-medium">Unassessed beyond (m from a picked line)</span>
              <input name="unassessedBeyondM" defaultValue="500" inputMode="decimal" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
            </label>
            <div className="flex items-end md:col-span-2">
              <PrimaryButton type="submit" disabled={busy}>
                {busy ? "Starting…" : "Reconstruct"}
              </PrimaryButton>
            </div>
          </Form>
        )
      ) : null}
    </div>
  );
}
