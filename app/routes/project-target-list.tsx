// One core-target list: its settings, the targets table (every field of issue 11), the cruise plan,
// publish (leads and owners), status updates (analysts and up, published lists only), the exports
// and further downloads with the cautions, and a print view (@media print: the table and plan only).
import { Link, useActionData } from "react-router";
import { requireProjectAccess } from "~/permissions.server";
import { publishTargetList, targetListView, targetPatch, updateTarget, type PlanView } from "~/target-lists.server";
import { formAction, parseForm } from "~/route-helpers.server";
import { UserError } from "~/errors";
import { can } from "~/permissions";
import { formatUtc } from "~/format";
import { Cautions } from "~/components/Cautions";
import { FormProblemNote, IntentButton } from "~/components/forms/Field";
import { CruisePlanView } from "~/components/targets/CruisePlan";
import { TargetsTable, type TargetRowView } from "~/components/targets/TargetsTable";
import type { Route } from "./+types/project-target-list";

export const meta = () => [{ title: "Target list · Lowstand" }];

const listIdOf = (v: string | undefined) => {
  if (!v || !/^\d{1,9}$/.test(v)) throw new Response("There is no such target list.", { status: 404 });
  return Number(v);
};

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  try {
    const view = await targetListView(listIdOf(params.listId), project.id, role);
    return { projectId: project.id, view, mayPublish: can(role, "project.edit"), mayRecord: can(role, "data.upload") };
  } catch (e) {
    if (e instanceof UserError && e.status === 404) throw new Response(e.message, { status: 404 });
    throw e;
  }
}

const num = (v: FormDataEntryValue | null) => (v === null || String(v).trim() === "" ? undefined : Number(String(v).replace(",", ".")));

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const form = await request.formData();
  const listId = listIdOf(params.listId);
  return formAction(async () => {
    const intent = form.get("intent");
    if (intent === "publish") {
      if (!can(role, "project.edit")) throw new UserError(403, "may_not_publish", "Only the project's leads and owners publish target lists.");
      await publishTargetList(listId, project.id, identity.user.id, { clientAddress: context?.clientAddress });
      return { ok: "Published: the list cannot change now; record each target's core and result below." };
    }
    if (intent === "status") {
      if (!can(role, "data.upload")) throw new UserError(403, "may_not_record", "Only analysts, leads and owners record cores and results.");
      const status = String(form.get("status"));
      const achieved = String(form.get("achieved") ?? "").trim();
      const [ax, ay] = achieved ? achieved.split(/[\s,;]+/).map(Number) : [];
      const cal = String(form.get("calBp") ?? "").trim();
      const [from, to] = cal ? cal.split(/[-–\s]+/).map(Number) : [];
      const indicators = String(form.get("archaeologicalIndicators") ?? "").trim();
      const patch = parseForm(
        targetPatch,
        status === "cored"
          ? { status, core: { penetrationM: num(form.get("penetrationM")), recoveryM: num(form.get("recoveryM")), horizonReached: String(form.get("horizonReached")), ...(achieved ? { x: ax, y: ay } : {}) } }
          : { status, result: { preservedLandSurface: String(form.get("preservedLandSurface")), archaeologicalIndicators: indicators || null, dates: cal ? [{ calBpFrom: from, calBpTo: to }] : [] } },
      );
      const targetId = Number(form.get("targetId"));
      const view = await targetListView(listId, project.id, role);
      if (!view.targets.some((t) => t.id === targetId)) throw new UserError(404, "no_such_target", "That target is not on this list.");
      const row = await updateTarget(targetId, project.id, identity.user.id, patch, { clientAddress: context?.clientAddress });
      return { ok: `${row.waypoint} is now ${row.status}.` };
    }
    throw new UserError(400, "unknown_intent", "Unknown action.");
  });
}

export default function ProjectTargetList({ loaderData }: Route.ComponentProps) {
  const { projectId, view, mayPublish, mayRecord } = loaderData;
  const outcome = useActionData<typeof action>() as { ok?: string; error?: string } | undefined;
  const l = view.list;
  const published = l.status === "published";
  const exact = view.positions === "exact";
  const params = l.params as { notes?: string[]; constraintCounts?: Array<{ reason: string; cells: number }>; modes?: Array<{ kind: string; asked: number | null; taken: number }>; crs?: { label: string } };
  return (
    <div className="space-y-5">
      <style>{`@media print { nav, header, .print\\:hidden, details:not([open]) { display: none !important; } body { background: white; } table { font-size: 9pt; } }`}</style>
      <p className="text-sm print:hidden">
        <Link className="underline" to={`/projects/${projectId}/targets`}>
          Core targets
        </Link>{" "}
        /
      </p>
      <h1 className="text-2xl font-semibold">{l.name}</h1>
      <p className="text-sm text-sediment-700">
        {published ? `Published ${l.publishedAt ? formatUtc(l.publishedAt) : ""} — unchangeable; hash ${l.publishedHash?.slice(0, 16)}…` : "Draft: not yet published."} Ranked on{" "}
        {(l.source as unknown as { label?: string } | undefined)?.label}. Positions: {view.positions}. Coordinates in {params.crs?.label}.
      </p>
      <Cautions compact />
      {outcome?.error ? <FormProblemNote message={outcome.error} /> : null}
      {outcome?.ok ? (
        <p role="status" className="text-sm text-deep-800">
          {outcome.ok}
        </p>
      ) : null}
      <div className="flex flex-wrap items-center gap-3 print:hidden">
        {mayPublish && !published ? (
          <IntentButton intent="publish" label="Publish the list">
            Publish the list
          </IntentButton>
        ) : null}
        <span className="text-sm">Download:</span>
        {(["csv", "geojson", "gpkg"] as const).map((fmt) => (
          <a key={fmt} className="text-sm text-deep-800 underline" href={`/api/target-lists/${l.id}/export?format=${fmt}`} download>
            {fmt === "csv" ? "CSV" : fmt === "geojson" ? "GeoJSON" : "GeoPackage"}
          </a>
        ))}
        {view.downloads.map((d) => (
          <a key={d.href} className="text-sm text-deep-800 underline" href={d.href} download>
            {d.label}
          </a>
        ))}
        {view.agesKa.length ? (
          <span className="text-sm">
            Shorelines:{" "}
            {[...view.agesKa]
              .sort((a, b) => b - a)
              .map((a) => (
                <a key={a} className="mr-1 text-deep-800 underline" href={`/api/reconstructions/${(l.params as { reconstruction?: { id: number } }).reconstruction?.id}/vectors/shoreline?age=${a}`} download>
                  {a} ka
                </a>
              ))}
          </span>
        ) : null}
        <button type="button" className="text-sm underline" onClick={() => window.print()}>
          Print
        </button>
      </div>
      {l.plan ? <CruisePlanView plan={l.plan as PlanView} /> : null}
      <section aria-label="Targets" className="space-y-2">
        <h2 className="font-semibold">Targets ({view.targets.length})</h2>
        {params.modes ? (
          <p className="text-xs text-sediment-700">{params.modes.map((m) => `${m.kind}: ${m.taken}${m.asked === null ? "" : ` of ${m.asked}`}`).join(" · ")}</p>
        ) : null}
        <TargetsTable targets={view.targets as unknown as TargetRowView[]} agesKa={view.agesKa} mayRecord={mayRecord && published} exact={exact} />
      </section>
      {params.notes?.length ? (
        <section className="text-xs text-sediment-700">
          <h2 className="text-sm font-semibold">Notes</h2>
          <ul className="list-disc pl-5">
            {params.notes.map((n, k) => (
              <li key={k}>{n}</li>
            ))}
          </ul>
        </section>
      ) : null}
      {params.constraintCounts ? (
        <details className="text-xs print:hidden">
          <summary className="cursor-pointer">Why cells were refused</summary>
          <ul className="list-disc pl-5">
            {params.constraintCounts.map((c) => (
              <li key={c.reason}>
                {c.reason}: {c.cells} cells
              </li>
            ))}
          </ul>
        </details>
      ) : null}
    </div>
  );
}
