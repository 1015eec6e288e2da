// Known sites, as exactly as the caller's role allows (design §9). Custodians set the visibility of
// their community's records here; leads and owners export exact positions (audit-logged).
import { data, Form, useActionData } from "react-router";
import { z } from "zod";
import { requireProjectAccess } from "~/permissions.server";
import { PRIVATE_HEADERS, setSiteVisibility, sitesFor } from "~/sites.server";
import { formAction, parseForm } from "~/route-helpers.server";
import { can } from "~/permissions";
import { FormProblemNote, QuietButton } from "~/components/forms/Field";
import type { Route } from "./+types/project-sites";

export const meta = () => [{ title: "Known sites · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "project.read");
  const view = await sitesFor(project, { userId: identity.user.id, role });
  return data({ projectId: project.id, mayExport: can(role, "sites.export"), ...view }, { headers: PRIVATE_HEADERS });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "project.read");
  const form = await request.formData();
  return formAction(async () => {
    const f = parseForm(z.object({ siteId: z.coerce.number().int().positive(), visibility: z.enum(["normal", "restricted", "withheld"], { error: "Choose normal, restricted or withheld." }) }), form);
    await setSiteVisibility(project.id, { userId: identity.user.id, role }, f.siteId, f.visibility, { clientAddress: context?.clientAddress });
    return { ok: "Visibility changed." };
  });
}

const CONTEXT_WORDS: Record<string, string> = { in_situ: "in situ", derived: "derived", trawled: "trawled", dredged: "dredged" };

export default function ProjectSites({ loaderData }: Route.ComponentProps) {
  const { exact, generalised, custodianFor, mayExport, projectId } = loaderData;
  const result = useActionData<typeof action>();
  return (
    <div className="max-w-5xl space-y-6">
      <h1 className="text-2xl font-semibold">Known sites</h1>
      <p className="max-w-3xl rounded-sm border-l-4 border-caution-600 bg-caution-100/60 px-3 py-2 text-sm">
        Site locations are confidential: looting follows published positions. Share exact positions only with people who need them, under local
        heritage law. Derived, trawled and dredged finds are shown but never scored.
      </p>
      <FormProblemNote message={result && "error" in result ? result.error : null} />
      {mayExport ? (
        <p className="text-sm">
          Export exact positions (recorded in the audit log):{" "}
          <a className="underline" href={`/api/projects/${projectId}/sites/export?format=csv`}>
            CSV
          </a>{" "}
          ·{" "}
          <a className="underline" href={`/api/projects/${projectId}/sites/export?format=geojson`}>
            GeoJSON
          </a>
        </p>
      ) : null}
      {exact.length ? (
        <table className="w-full text-sm">
          <caption className="text-left text-xs text-sediment-600">{exact.length} records with exact positions (project CRS, m)</caption>
          <thead className="border-b border-sand-300 text-left text-xs uppercase tracking-wide text-sediment-600">
            <tr>
              <th className="py-1 pr-3">Label</th>
              <th className="py-1 pr-3">x</th>
              <th className="py-1 pr-3">y</th>
              <th className="py-1 pr-3">± m</th>
              <th className="py-1 pr-3">Kind</th>
              <th className="py-1 pr-3">Context</th>
              <th className="py-1 pr-3">cal BP</th>
              <th className="py-1 pr-3">Community</th>
              <th className="py-1">Visibility</th>
            </tr>
          </thead>
          <tbody>
            {exact.map((s) => (
              <tr key={s.id} className="border-b border-sand-100">
                <td className="py-1 pr-3">{s.label || `row ${s.rowNumber}`}</td>
                <td className="py-1 pr-3 tabular-nums">{s.x.toFixed(1)}</td>
                <td className="py-1 pr-3 tabular-nums">{s.y.toFixed(1)}</td>
                <td className="py-1 pr-3 tabular-nums">{s.precisionM ?? "—"}</td>
                <td className="py-1 pr-3">{s.siteKind}</td>
                <td className="py-1 pr-3">{CONTEXT_WORDS[s.context] ?? s.context}</td>
                <td className="py-1 pr-3 tabular-nums">{s.calBpFrom != null ? `${s.calBpFrom}–${s.calBpTo ?? "?"}` : "—"}</td>
                <td className="py-1 pr-3">{s.community ?? "—"}</td>
                <td className="py-1">
                  {custodianFor && s.community === custodianFor ? (
                    <Form method="post" className="flex gap-1">
                      <input type="hidden" name="siteId" value={s.id} />
                      <select name="visibility" defaultValue={s.visibility} aria-label={`Visibility of ${s.label || `row ${s.rowNumber}`}`} className="rounded-sm border border-sand-300 bg-white text-xs">
                        <option value="normal">normal</option>
                        <option value="restricted">restricted</option>
                        <option value="withheld">withheld</option>
                      </select>
                      <QuietButton type="submit">Set</QuietButton>
                    </Form>
                  ) : (
                    s.visibility
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
      {generalised.cells.length || generalised.suppressed ? (
        <section>
          <h2 className="font-semibold">Generalised to {generalised.cellSizeM / 1000} km cells</h2>
          <p className="text-xs text-sediment-600">
            Cell centres with the number of known sites in each; cells with fewer than {generalised.minCount} are not shown
            {generalised.suppressed ? ` (${generalised.suppressed} sites left out)` : ""}.
          </p>
          <table className="mt-2 text-sm">
            <thead className="text-left text-xs uppercase tracking-wide text-sediment-600">
              <tr>
                <th className="pr-4">cell centre x</th>
                <th className="pr-4">cell centre y</th>
                <th>sites</th>
              </tr>
            </thead>
            <tbody>
              {generalised.cells.map((c) => (
                <tr key={`${c.x}|${c.y}`}>
                  <td className="pr-4 tabular-nums">{c.x}</td>
                  <td className="pr-4 tabular-nums">{c.y}</td>
                  <td className="tabular-nums">{c.count}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      ) : null}
      {!exact.length && !generalised.cells.length && !generalised.suppressed ? (
        <p className="text-sm text-sediment-600">No known sites yet. An analyst or lead uploads them on the Data page (CSV or GeoJSON).</p>
      ) : null}
    </div>
  );
}
