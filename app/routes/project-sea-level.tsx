// Sea-level curves: the shipped published curve (read-only, with its citation and the far-field
// label), the project's own curves (copies, edited tables, imported CSV), and index points.
import { formatUtc } from "~/format";
import { useState } from "react";
import { Form, useActionData } from "react-router";
import { z } from "zod";
import { requireProjectAccess } from "~/permissions.server";
import { createCurve, curveCsv, indexPoints, listCurves, parseCurveTable, shippedCurve, updateCurve } from "~/sea-level-curves.server";
import { formAction, parseForm } from "~/route-helpers.server";
import { UserError } from "~/errors";
import { can } from "~/permissions";
import { SeaLevelChart } from "~/components/charts/SeaLevelChart";
import { FormOutcome, PrimaryButton, QuietButton } from "~/components/forms/Field";
import type { Route } from "./+types/project-sea-level";

export const meta = () => [{ title: "Sea level · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const curves = await listCurves(project.id);
  return {
    shipped: shippedCurve(),
    curves: curves.map((c) => ({ id: c.id, name: c.name, source: c.source, points: c.points, csv: curveCsv(c.points), updatedAt: c.updatedAt.toISOString() })),
    indexPoints: await indexPoints(project.id),
    mayEdit: can(role, "data.upload"),
  };
}

const curveName = z.string().trim().min(1, "Name the curve.").max(120, "Curve names are at most 120 characters.").refine((v) => !/[<>]/.test(v), "Curve names cannot contain < or >.");

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "data.upload");
  const form = await request.formData();
  const meta = { clientAddress: context?.clientAddress };
  return formAction(async () => {
    switch (String(form.get("intent") ?? "")) {
      case "copy-shipped": {
        const f = parseForm(z.object({ name: curveName }), form);
        const s = shippedCurve();
        await createCurve(project.id, identity.user.id, f.name, `copy of the shipped curve: ${s.citation}`, s.points, meta);
        return { ok: `“${f.name}” made from the shipped curve. Edit its table below.` };
      }
      case "import": {
        const f = parseForm(z.object({ name: curveName, table: z.string() }), form);
        await createCurve(project.id, identity.user.id, f.name, "imported table", parseCurveTable(f.table), meta);
        return { ok: `“${f.name}” imported.` };
      }
      case "edit": {
        const f = parseForm(z.object({ curveId: z.coerce.number().int().positive(), table: z.string() }), form);
        await updateCurve(project.id, identity.user.id, f.curveId, parseCurveTable(f.table), meta);
        return { ok: "Curve saved. Reconstructions already made keep the curve they used; new ones use this." };
      }
      default:
        throw new UserError(400, "unknown_intent", "Choose what to do: copy-shipped, import or edit.");
    }
  });
}

export default function ProjectSeaLevel({ loaderData }: Route.ComponentProps) {
  const { shipped, curves, indexPoints, mayEdit } = loaderData;
  const result = useActionData<typeof action>();
  const [selected, setSelected] = useState<number | null>(curves[0]?.id ?? null);
  const current = curves.find((c) => c.id === selected) ?? null;
  const chartCurves = [{ name: `${shipped.name} (${shipped.label})`, points: shipped.points }, ...(current ? [{ name: current.name, points: current.points }] : [])];
  return (
    <div className="max-w-5xl space-y-6">
      <h1 className="text-2xl font-semibold">Sea level</h1>
      <FormOutcome result={result} />
      <figure>
        <SeaLevelChart curves={chartCurves} indexPoints={indexPoints} />
        <figcaption className="text-xs text-sediment-600">
          Shaded bands are ±σ as published; orange marks are the project's sea-level index points with their age and height uncertainties ({indexPoints.length}).
        </figcaption>
      </figure>

      <section className="rounded-md border border-sand-200 bg-white p-4">
        <h2 className="font-semibold">Shipped curve — {shipped.label}</h2>
        <p className="mt-1 text-sm text-sediment-800">{shipped.citation}</p>
        <p className="mt-1 text-xs text-sediment-600">
          Ice-volume-equivalent sea level: not local relative sea level anywhere (isostasy makes local RSL differ by metres to tens of metres). Read-only; copy it to adjust it.
        </p>
        <details className="mt-2 text-sm">
          <summary className="cursor-pointer">The table ({shipped.points.length} rows)</summary>
          <table className="mt-1 text-xs tabular-nums">
            <thead>
              <tr>
                <th className="pr-4 text-left">age (ka BP)</th>
                <th className="pr-4 text-left">sea level (m)</th>
                <th className="text-left">σ (m)</th>
              </tr>
            </thead>
            <tbody>
              {shipped.points.map((p) => (
                <tr key={p.ageKa}>
                  <td className="pr-4">{p.ageKa}</td>
                  <td className="pr-4">{p.rslM}</td>
                  <td>{p.sigmaM ?? "—"}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </details>
        {mayEdit ? (
          <Form method="post" className="mt-3 flex items-end gap-2">
            <input type="hidden" name="intent" value="copy-shipped" />
            <label className="text-sm">
              <span className="block">Name of the copy</span>
              <input name="name" required defaultValue="Velmar regional (adjusted)" className="rounded-sm border border-sand-300 px-2 py-1" />
            </label>
            <QuietButton type="submit">Copy to a project curve</QuietButton>
          </Form>
        ) : null}
      </section>

      <section className="space-y-3">
        <h2 className="font-semibold">Project curves</h2>
        {curves.length === 0 ? <p className="text-sm text-sediment-600">None yet.</p> : null}
        <div className="flex flex-wrap gap-2">
          {curves.map((c) => (
            <button key={c.id} type="button" aria-pressed={c.id === selected} onClick={() => setSelected(c.id)} className={`rounded-sm border px-2 py-0.5 text-sm ${c.id === selected ? "border-ember-500 bg-ember-300/30" : "border-sand-300 bg-white"}`}>
              {c.name}
            </button>
          ))}
        </div>
        {current ? (
          <div>
            <p className="text-xs text-sediment-600">
              {current.source} · {current.points.length} rows · saved {formatUtc(current.updatedAt)}
            </p>
            {mayEdit ? (
              <Form method="post" className="mt-2 space-y-2" key={current.id}>
                <input type="hidden" name="intent" value="edit" />
                <input type="hidden" name="curveId" value={current.id} />
                <label className="block text-sm">
                  <span className="block">Table (age_ka, rsl_m, sigma_m)</span>
                  <textarea name="table" defaultValue={current.csv} rows={10} className="mt-1 block w-full max-w-xl rounded-sm border border-sand-300 p-2 font-mono text-xs" />
                </label>
                <PrimaryButton type="submit">Save the curve</PrimaryButton>
              </Form>
            ) : null}
          </div>
        ) : null}
        {mayEdit ? (
          <Form method="post" className="space-y-2 rounded-md border border-dashed border-sand-400 p-3">
            <input type="hidden" name="intent" value="import" />
            <h3 className="text-sm font-semibold">Import a curve from CSV</h3>
            <label className="block text-sm">
              <span className="block">Name</span>
              <input name="name" required className="rounded-sm border border-sand-300 px-2 py-1" />
            </label>
            <label className="block text-sm">
              <span className="block">CSV text (columns age_ka, rsl_m and optionally sigma_m)</span>
              <textarea name="table" required rows={6} className="mt-1 block w-full max-w-xl rounded-sm border border-sand-300 p-2 font-mono text-xs" />
            </label>
            <label className="block text-xs">
              or read a file into the box:{" "}
              <input
                type="file"
                accept=".csv,text/csv,text/plain"
                onChange={async (e) => {
                  const f = e.target.files?.[0];
                  const box = e.target.form?.elements.namedItem("table") as HTMLTextAreaElement | null;
                  if (f && box) box.value = await f.text();
                }}
              />
            </label>
            <QuietButton type="submit">Import</QuietButton>
          </Form>
        ) : null}
      </section>
    </div>
  );
}
