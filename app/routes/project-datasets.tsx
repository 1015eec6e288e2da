// The evidence a project holds: one sortable, filterable table, and the upload form.
import { useMemo, useState } from "react";
import { Form, Link, useActionData, useNavigation } from "react-router";
import { requireProjectAccess } from "~/permissions.server";
import { ingestUpload, listDatasets } from "~/datasets.server";
import { KIND_LABELS, KINDS_WITH_HEIGHTS } from "~/evidence-kinds";
import { receiveUpload, uploadMaxBytes } from "~/uploads.server";
import { formatBytes, formatUtc } from "~/format";
import { formAction } from "~/route-helpers.server";
import { can } from "~/permissions";
import { EVIDENCE_KINDS, type EvidenceKind } from "~/evidence/types";
import { FormProblemNote, PrimaryButton } from "~/components/forms/Field";
import type { Route } from "./+types/project-datasets";

export const meta = () => [{ title: "Data · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const rows = await listDatasets(project.id);
  return {
    projectId: project.id,
    crsEpsg: project.crsEpsg,
    mayUpload: can(role, "data.upload"),
    maxUpload: formatBytes(uploadMaxBytes()),
    datasets: rows.map((d) => ({ ...d, createdAt: d.createdAt.toISOString(), kindLabel: KIND_LABELS[d.kind as EvidenceKind] ?? d.kind })),
  };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "data.upload");
  return formAction(async () => {
    const upload = await receiveUpload(request);
    const d = await ingestUpload(project, identity.user.id, upload, { clientAddress: context?.clientAddress });
    return { ok: `“${d.name}” is stored: ${d.count.toLocaleString("en")} ${d.kind === "bathymetry" || d.kind.endsWith("grid") ? "cells" : "records"}.`, datasetId: d.id, warnings: d.warnings };
  });
}

type SortKey = "name" | "kindLabel" | "sizeBytes" | "createdAt" | "count";

export default function ProjectDatasets({ loaderData }: Route.ComponentProps) {
  const { projectId, datasets, mayUpload, maxUpload, crsEpsg } = loaderData;
  const result = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  const [kind, setKind] = useState<EvidenceKind>("bathymetry");
  const [filter, setFilter] = useState("");
  const [kindFilter, setKindFilter] = useState("");
  const [sort, setSort] = useState<{ key: SortKey; dir: 1 | -1 }>({ key: "createdAt", dir: -1 });
  const rows = useMemo(() => {
    const f = filter.trim().toLowerCase();
    return datasets
      .filter((d) => (!kindFilter || d.kind === kindFilter) && (!f || `${d.name} ${d.kindLabel} ${d.uploadedBy ?? ""}`.toLowerCase().includes(f)))
      .sort((a, b) => {
        const x = a[sort.key] ?? "";
        const y = b[sort.key] ?? "";
        return (x < y ? -1 : x > y ? 1 : 0) * sort.dir;
      });
  }, [datasets, filter, kindFilter, sort]);
  const problem = result && "error" in result ? result : null;
  const ok = result && "ok" in result ? result : null;

  const header = (key: SortKey, label: string) => (
    <th className="py-1 pr-4" aria-sort={sort.key === key ? (sort.dir === 1 ? "ascending" : "descending") : "none"}>
      <button type="button" className="uppercase tracking-wide hover:text-deep-700" onClick={() => setSort((s) => ({ key, dir: s.key === key ? (s.dir === 1 ? -1 : 1) : 1 }))}>
        {label}
        {sort.key === key ? (sort.dir === 1 ? " ▲" : " ▼") : ""}
      </button>
    </th>
  );

  return (
    <div className="space-y-6">
      <h1 className="text-2xl font-semibold">Data</h1>
      <FormProblemNote message={problem?.error} />
      {ok ? (
        <div role="status" className="rounded-sm border-l-4 border-deep-500 bg-sea-200/40 px-3 py-2 text-sm">
          <p>
            {ok.ok} <Link className="underline" to={`/projects/${projectId}/data/${ok.datasetId}`}>Open it</Link>
          </p>
          {ok.warnings.length ? (
            <ul className="mt-1 list-disc pl-5 text-xs">
              {ok.warnings.map((w) => (
                <li key={w}>{w}</li>
              ))}
            </ul>
          ) : null}
        </div>
      ) : null}

      {mayUpload ? (
        <Form method="post" encType="multipart/form-data" className="grid max-w-4xl gap-3 rounded-md border border-sand-200 bg-white p-4 md:grid-cols-2">
          <h2 className="font-semibold md:col-span-2">Add evidence</h2>
          <label className="text-sm">
            <span className="block font-medium">What the file holds</span>
            <select name="kind" value={kind} onChange={(e) => setKind(e.target.value as EvidenceKind)} className="mt-1 block w-full rounded-sm border border-sand-300 bg-white px-2 py-1.5">
              {EVIDENCE_KINDS.map((k) => (
                <option key={k} value={k}>
                  {KIND_LABELS[k]}
                </option>
              ))}
            </select>
          </label>
          <label className="text-sm">
            <span className="block font-medium">Name (optional)</span>
            <input name="name" maxLength={160} className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
          </label>
          <div className="text-sm md:col-span-2">
            <label htmlFor="upload-file" className="block font-medium">
              File
            </label>
            <input id="upload-file" name="file" type="file" required aria-describedby="upload-file-hint" className="mt-1 block w-full text-sm" />
            <p id="upload-file-hint" className="text-xs text-sediment-600">
              GeoTIFF, ESRI ASCII grid, XYZ, CSV, GeoJSON, GeoPackage, zipped Shapefile or AGS4; up to {maxUpload}. Project CRS EPSG:{crsEpsg}; GeoJSON is read as WGS 84.
            </p>
          </div>
          {KINDS_WITH_HEIGHTS.has(kind) ? (
            <fieldset className="grid gap-3 rounded-sm border border-sand-200 p-3 md:col-span-2 md:grid-cols-3">
              <legend className="px-1 text-sm font-medium">Vertical reference (required)</legend>
              <label className="text-sm">
                <span className="block">Values are</span>
                <select name="sign" required defaultValue="" className="mt-1 block w-full rounded-sm border border-sand-300 bg-white px-2 py-1.5">
                  <option value="" disabled>
                    choose…
                  </option>
                  <option value="depth_positive_down">depths, positive down</option>
                  <option value="elevation_positive_up">elevations, positive up</option>
                </select>
              </label>
              <label className="text-sm">
                <span className="block">Datum</span>
                <input name="datum" required placeholder="e.g. LAT, MSL" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
              </label>
              <label className="text-sm">
                <span className="block">Offset to present MSL (m)</span>
                <input name="offset_to_msl_m" required inputMode="decimal" placeholder="0" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
              </label>
              <p className="text-xs text-sediment-600 md:col-span-3">
                Inside Lowstand every height is an elevation in metres relative to present mean sea level. In macro-tidal water the datum offset alone is several metres.
              </p>
            </fieldset>
          ) : null}
          <label className="text-sm">
            <span className="block">EPSG code, if the file carries no CRS (optional)</span>
            <input name="declared_epsg" inputMode="numeric" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
          </label>
          <div className="flex items-end">
            <PrimaryButton type="submit" disabled={busy}>
              {busy ? "Checking and storing…" : "Upload"}
            </PrimaryButton>
          </div>
        </Form>
      ) : null}

      <section>
        <div className="flex flex-wrap items-end gap-3">
          <label className="text-sm">
            <span className="block text-xs text-sediment-600">Filter</span>
            <input value={filter} onChange={(e) => setFilter(e.target.value)} placeholder="name, kind, person" className="rounded-sm border border-sand-300 px-2 py-1" />
          </label>
          <label className="text-sm">
            <span className="block text-xs text-sediment-600">Kind</span>
            <select value={kindFilter} onChange={(e) => setKindFilter(e.target.value)} className="rounded-sm border border-sand-300 bg-white px-2 py-1">
              <option value="">all kinds</option>
              {EVIDENCE_KINDS.map((k) => (
                <option key={k} value={k}>
                  {KIND_LABELS[k]}
                </option>
              ))}
            </select>
          </label>
          <span className="text-xs text-sediment-600">
            {rows.length} of {datasets.length}
          </span>
        </div>
        {datasets.length === 0 ? (
          <p className="mt-4 text-sm text-sediment-600">{mayUpload ? "No evidence yet. Upload a bathymetry grid to begin." : "No evidence yet. An analyst or lead uploads the bathymetry grid to begin."}</p>
        ) : (
          <table className="mt-3 w-full text-sm">
            <thead className="border-b border-sand-300 text-left text-xs text-sediment-600">
              <tr>
                {header("name", "Name")}
                {header("kindLabel", "Kind")}
                {header("count", "Cells / records")}
                <th className="py-1 pr-4 uppercase tracking-wide">CRS · datum</th>
                <th className="py-1 pr-4 uppercase tracking-wide">Extent (m)</th>
                {header("sizeBytes", "Size")}
                {header("createdAt", "Uploaded")}
              </tr>
            </thead>
            <tbody>
              {rows.map((d) => (
                <tr key={d.id} className="border-b border-sand-100 align-top">
                  <td className="py-1.5 pr-4">
                    <Link className="font-medium text-deep-800 underline" to={`/projects/${projectId}/data/${d.id}`}>
                      {d.name}
                    </Link>
                  </td>
                  <td className="py-1.5 pr-4">{d.kindLabel}</td>
                  <td className="py-1.5 pr-4 tabular-nums">{d.count.toLocaleString("en")}</td>
                  <td className="py-1.5 pr-4 text-xs">
                    EPSG:{d.crsEpsg}
                    {d.vertical ? ` · ${String((d.vertical as { datum?: string }).datum ?? "")}` : ""}
                  </td>
                  <td className="py-1.5 pr-4 text-xs tabular-nums">
                    {d.extent ? `${((d.extent[2] - d.extent[0]) / 1000).toFixed(1)} × ${((d.extent[3] - d.extent[1]) / 1000).toFixed(1)} km` : "—"}
                  </td>
                  <td className="py-1.5 pr-4 tabular-nums">{formatBytes(d.sizeBytes)}</td>
                  <td className="py-1.5 pr-4 text-xs">
                    {formatUtc(d.createdAt)} · {d.uploadedBy ?? "—"}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
    </div>
  );
}
