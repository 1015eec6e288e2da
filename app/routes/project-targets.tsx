// Core targets (design §6, issue 11): the project's target lists, and the form that makes one from a
// published scoring (or a model, for roles that may read models). Viewers see published lists only.
import { Link, redirect, useActionData, useNavigation } from "react-router";
import { requireProjectAccess } from "~/permissions.server";
import { listScorings, targetLabel, type ScoringTarget } from "~/scorings.server";
import { listModels } from "~/models.server";
import { createTargetList, listTargetLists, targetListRequest, transectAxes } from "~/target-lists.server";
import { projectClassification } from "~/validations.server";
import { formAction, parseForm } from "~/route-helpers.server";
import { UserError } from "~/errors";
import { can } from "~/permissions";
import { formatUtc } from "~/format";
import { defaultConstraintSet } from "~/scoring/target-constraints";
import { Cautions } from "~/components/Cautions";
import { TargetListForm, type TargetFormData } from "~/components/targets/TargetListForm";
import type { Route } from "./+types/project-targets";

export const meta = () => [{ title: "Core targets · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const lists = await listTargetLists(project.id, role);
  const mayMake = can(role, "runs.start");
  let form: TargetFormData | null = null;
  if (mayMake) {
    const scorings = (await listScorings(project.id)).filter((s) => s.effectiveStatus === "published");
    const models = can(role, "models.read") ? (await listModels(project.id)).filter((m) => m.effectiveStatus === "published") : [];
    const grid = (scorings[0]?.result as { grid?: { originX: number; originY: number; height: number; cellSizeY: number } } | null)?.grid;
    const d = defaultConstraintSet();
    form = {
      sources: [
        ...scorings.map((s) => ({ value: `scoring:${s.id}`, label: `Scoring ${s.id}: ${s.version.setName} v${s.version.number}, ${targetLabel(s.target as unknown as ScoringTarget)}` })),
        ...models.map((m) => ({ value: `model:${m.id}`, label: `Model ${m.id}: ${m.name}` })),
      ],
      axes: await transectAxes(project.id),
      classLabels: (await projectClassification(project.id)).labels,
      constraints: { minWaterDepthM: d.minWaterDepthM, maxWaterDepthM: d.maxWaterDepthM, maxSlopeDeg: d.maxSlopeDeg, barrelLengthM: d.barrelLengthM, requiredIntoOlderUnitM: d.requiredIntoOlderUnitM, maxDistanceToSurveyLineM: d.maxDistanceToSurveyLineM, positioningToleranceM: d.positioningToleranceM },
      // the west edge of the grid, half-way down: a place to start (type the real port)
      port: grid ? { name: "Port (west edge of the grid)", x: grid.originX, y: grid.originY - (grid.height * grid.cellSizeY) / 2 } : { name: "Port", x: 0, y: 0 },
    };
  }
  return { projectId: project.id, lists, mayMake, form };
}

const num = (v: FormDataEntryValue | null) => (v === null || String(v).trim() === "" ? undefined : Number(String(v).replace(",", ".")));
const numOrNull = (v: FormDataEntryValue | null) => (v === null || String(v).trim() === "" ? null : Number(String(v).replace(",", ".")));

/** The form's fields as a target-list request (the API's shape). */
function requestFromForm(form: FormData) {
  const [kind, id] = String(form.get("source") ?? "").split(":");
  const modes: unknown[] = [];
  if (form.get("transect") === "on") {
    const ref = String(form.get("axisRef") ?? "");
    const axis = ref
      ? undefined
      : String(form.get("axisPoints") ?? "")
          .split(";")
          .map((p) => p.trim())
          .filter(Boolean)
          .map((p) => p.split(/[\s,]+/).map(Number));
    const [datasetId, featureIndex] = ref.split(":").map(Number);
    modes.push({
      kind: "transect",
      name: String(form.get("transectName") ?? "Transect"),
      ...(ref ? { axisFrom: { datasetId, featureIndex } } : { axis }),
      featureWidthM: num(form.get("featureWidthM")),
      marginWidthM: num(form.get("marginWidthM")),
      halfLengthM: num(form.get("halfLengthM")),
      stationSpacingM: num(form.get("stationSpacingM")),
      chainagesM: String(form.get("chainagesM") ?? "").split(/[\s,;]+/).filter(Boolean).map(Number),
    });
  }
  const bf = num(form.get("bestFirst")) ?? 0;
  if (bf > 0) modes.push({ kind: "best-first", count: bf });
  const ctl = num(form.get("control")) ?? 0;
  if (ctl > 0) modes.push({ kind: "control", count: ctl, classes: String(form.get("controlClasses") ?? "").split(",").map((s) => s.trim()).filter(Boolean) });
  const lm = num(form.get("learnMost")) ?? 0;
  if (lm > 0) modes.push({ kind: "learn-most", count: lm });
  const portX = num(form.get("portX"));
  return {
    name: String(form.get("name") ?? ""),
    source: { kind, id: Number(id) },
    constraints: {
      minWaterDepthM: num(form.get("minWaterDepthM")),
      maxWaterDepthM: num(form.get("maxWaterDepthM")),
      maxSlopeDeg: num(form.get("maxSlopeDeg")),
      barrelLengthM: num(form.get("barrelLengthM")),
      requiredIntoOlderUnitM: num(form.get("requiredIntoOlderUnitM")),
      maxDistanceToSurveyLineM: numOrNull(form.get("maxDistanceToSurveyLineM")),
      positioningToleranceM: num(form.get("positioningToleranceM")),
      unassessedHorizon: String(form.get("unassessedHorizon") ?? "refuse"),
    },
    minSpacingM: num(form.get("minSpacingM")),
    waypointPrefix: String(form.get("waypointPrefix") ?? "CT").trim() || "CT",
    modes,
    cruise:
      portX === undefined
        ? null
        : {
            port: { name: String(form.get("portName") ?? "Port").trim() || "Port", x: portX, y: num(form.get("portY")) },
            speedKnots: num(form.get("speedKnots")),
            stationHours: num(form.get("stationHours")),
            shipDays: num(form.get("shipDays")),
            hoursPerDay: num(form.get("hoursPerDay")) ?? 24,
          },
  };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity, role } = await requireProjectAccess(request, params.projectId, "runs.start");
  const form = await request.formData();
  return formAction(async () => {
    if (form.get("intent") !== "create") throw new UserError(400, "unknown_intent", "Unknown action.");
    const req = parseForm(targetListRequest, requestFromForm(form));
    const list = await createTargetList(project, { userId: identity.user.id, role }, req, { clientAddress: context?.clientAddress });
    throw redirect(`/projects/${project.id}/targets/${list.id}`);
  });
}

export default function ProjectTargets({ loaderData }: Route.ComponentProps) {
  const { projectId, lists, mayMake, form } = loaderData;
  const problem = useActionData<typeof action>() as { error?: string } | undefined;
  const busy = useNavigation().state === "submitting";
  return (
    <div className="space-y-6">
      <h1 className="text-2xl font-semibold">Core targets</h1>
      <p className="max-w-3xl text-sm text-sediment-700">
        Where to core, from a published scoring: cells a corer and a vessel can really reach, chosen best first with a minimum spacing, in transects across a mapped feature, as
        control cores in low classes (so the programme can learn it was wrong) and where the horizon or the model is least certain; ordered into a cruise plan from a port. A lead
        publishes the list; each target is then tracked through coring to its result, and results flow into validation and the next trained model.
      </p>
      <Cautions compact />
      {lists.length === 0 ? (
        <p className="text-sm text-sediment-600">No target lists yet. An analyst, lead or owner makes one from a published scoring (score a weight set at full resolution on its Weights page first).</p>
      ) : (
        <table className="w-full text-sm">
          <thead className="border-b border-sand-300 text-left text-xs uppercase tracking-wide text-sediment-600">
            <tr>
              <th className="py-1 pr-4">List</th>
              <th className="py-1 pr-4">Ranked on</th>
              <th className="py-1 pr-4">Targets</th>
              <th className="py-1 pr-4">Cruise plan</th>
              <th className="py-1 pr-4">Cored / results</th>
              <th className="py-1 pr-4">Status</th>
              <th className="py-1">Made</th>
            </tr>
          </thead>
          <tbody>
            {lists.map((l) => (
              <tr key={l.id} className="border-b border-sand-100">
                <td className="py-1.5 pr-4">
                  <Link className="font-medium text-deep-800 underline" to={`/projects/${projectId}/targets/${l.id}`}>
                    {l.name}
                  </Link>
                </td>
                <td className="py-1.5 pr-4">{l.source.label}</td>
                <td className="py-1.5 pr-4 tabular-nums">{l.targets}</td>
                <td className="py-1.5 pr-4 tabular-nums">{l.plan ? `${l.plan.coresThatFit} fit, ${l.plan.totalHours.toFixed(1)} of ${l.plan.availableHours.toFixed(0)} h` : "—"}</td>
                <td className="py-1.5 pr-4 tabular-nums">
                  {l.byStatus.cored + l.byStatus.result} / {l.byStatus.result}
                </td>
                <td className="py-1.5 pr-4">
                  <span className="rounded-sm border border-sand-300 px-1.5 py-0.5 text-xs">{l.status === "published" ? "● published" : "○ draft"}</span>
                </td>
                <td className="py-1.5 text-xs tabular-nums">{formatUtc(l.createdAt)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {mayMake && form ? (
        form.sources.length === 0 ? (
          <p className="text-sm">
            Targets are chosen from a published scoring: score a weight-set version on the <Link className="underline" to={`/projects/${projectId}/weights`}>Weights</Link> page first.
          </p>
        ) : (
          <TargetListForm data={form} problem={problem?.error} busy={busy} />
        )
      ) : null}
    </div>
  );
}
