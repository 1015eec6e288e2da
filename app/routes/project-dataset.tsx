// One dataset: what it is, where it came from, a look at its values, and delete.
import { Form, redirect, useActionData } from "react-router";
import { requireProjectAccess } from "~/permissions.server";
import { datasetView, deleteDataset, getDataset } from "~/datasets.server";
import { formAction } from "~/route-helpers.server";
import { UserError } from "~/errors";
import { can } from "~/permissions";
import { formatBytes, formatUtc } from "~/format";
import { refusal } from "~/security.server";
import { Histogram } from "~/components/charts/Histogram";
import { DangerButton, FormProblemNote } from "~/components/forms/Field";
import type { Route } from "./+types/project-dataset";

export const meta = ({ data }: Route.MetaArgs) => [{ title: `${data?.dataset.name ?? "Dataset"} · Lowstand` }];

function datasetId(request: Request, param: string | undefined) {
  if (!param || !/^\d{1,9}$/.test(param)) throw refusal(request, 404, "no_such_dataset", "There is no such dataset in this project.");
  return Number(param);
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const row = await getDataset(project.id, datasetId(request, params.datasetId));
  if (!row) throw new Response("There is no such dataset in this project.", { status: 404 });
  return { dataset: datasetView(row.dataset, role, row.uploadedByName), mayDelete: can(role, "data.upload"), projectId: project.id };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "data.upload");
  const id = datasetId(request, params.datasetId);
  const form = await request.formData();
  return formAction(async () => {
    if (form.get("intent") !== "delete") throw new UserError(400, "unknown_intent", "The only thing to do here is delete.");
    await deleteDataset(project.id, id, identity.user.id, { clientAddress: context?.clientAddress });
    throw redirect(`/projects/${project.id}/data`);
  });
}

export default function ProjectDataset({ loaderData }: Route.ComponentProps) {
  const { dataset: d, mayDelete } = loaderData;
  const problem = useActionData<typeof action>();
  const hist = d.summary?.histogram as { edges: number[]; counts: number[] } | undefined;
  const rest = Object.entries(d.summary ?? {}).filter(([k]) => k !== "histogram");
  return (
    <div className="max-w-4xl space-y-6">
      <header>
        <p className="text-xs uppercase tracking-wide text-sediment-600">{d.kindLabel}</p>
        <h1 className="text-2xl font-semibold">{d.name}</h1>
      </header>
      <FormProblemNote message={problem && "error" in problem ? problem.error : null} />
      <dl className="grid grid-cols-[12rem_1fr] gap-x-6 gap-y-1 text-sm">
        <dt className="text-sediment-600">Format</dt>
        <dd>{d.format}</dd>
        <dt className="text-sediment-600">Cells / records</dt>
        <dd className="tabular-nums">{d.count.toLocaleString("en")}</dd>
        <dt className="text-sediment-600">CRS</dt>
        <dd>EPSG:{d.crsEpsg}</dd>
        {d.vertical ? (
          <>
            <dt className="text-sediment-600">Vertical reference</dt>
            <dd>
              {String((d.vertical as Record<string, unknown>).sign).replace(/_/g, " ")}, datum {String((d.vertical as Record<string, unknown>).datum)}, offset to present MSL{" "}
              {String((d.vertical as Record<string, unknown>).offsetToMslM)} m → stored as elevation relative to present MSL
            </dd>
          </>
        ) : null}
        {d.extent ? (
          <>
            <dt className="text-sediment-600">Extent (project CRS, m)</dt>
            <dd className="tabular-nums">
              x {d.extent[0].toFixed(0)} – {d.extent[2].toFixed(0)}, y {d.extent[1].toFixed(0)} – {d.extent[3].toFixed(0)}
            </dd>
          </>
        ) : null}
        <dt className="text-sediment-600">Provenance</dt>
        <dd>
          {d.originalName ? `“${d.originalName}”, ` : ""}
          {formatBytes(d.sizeBytes)}, uploaded {formatUtc(d.createdAt)} UTC by {d.uploadedBy ?? "—"}
          <br />
          <span className="font-mono text-xs">SHA-256 {d.sha256}</span>
        </dd>
      </dl>
      {d.warnings.length ? (
        <section>
          <h2 className="font-semibold">Accepted with notes</h2>
          <ul className="list-disc pl-5 text-sm">
            {d.warnings.map((w) => (
              <li key={w}>{w}</li>
            ))}
          </ul>
        </section>
      ) : null}
      {hist && Array.isArray(hist.edges) && Array.isArray(hist.counts) ? <Histogram edges={hist.edges} counts={hist.counts} unit="m" label="Elevation relative to present MSL" /> : null}
      {rest.length ? (
        <section>
          <h2 className="font-semibold">What the reader found</h2>
          <dl className="mt-1 grid grid-cols-[12rem_1fr] gap-x-6 gap-y-0.5 text-sm">
            {rest.map(([k, v]) => (
              <div key={k} className="contents">
                <dt className="text-sediment-600">{k.replace(/([A-Z])/g, " $1").replace(/_/g, " ").toLowerCase()}</dt>
                <dd className="break-words text-xs">{typeof v === "object" ? JSON.stringify(v) : String(v)}</dd>
              </div>
            ))}
          </dl>
        </section>
      ) : null}
      {mayDelete ? (
        <Form method="post" onSubmit={(e) => (!confirm(`Delete “${d.name}”? Its stored file goes too.`) ? e.preventDefault() : undefined)}>
          <input type="hidden" name="intent" value="delete" />
          <DangerButton type="submit">Delete this dataset</DangerButton>
        </Form>
      ) : null}
    </div>
  );
}
