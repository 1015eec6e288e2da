// The form that makes a core-target list: source, the corer and vessel constraints, the selection
// modes (best-first with spacing, a transect across a mapped axis or two typed points, control
// cores in chosen classes, learn most), and the cruise (port, speed, station time, ship days).
import { Form } from "react-router";
import { FormProblemNote, PrimaryButton } from "~/components/forms/Field";

export interface TargetFormData {
  sources: Array<{ value: string; label: string }>;
  axes: Array<{ datasetId: number; featureIndex: number; label: string; lengthM: number }>;
  classLabels: string[];
  constraints: { minWaterDepthM: number; maxWaterDepthM: number; maxSlopeDeg: number; barrelLengthM: number; requiredIntoOlderUnitM: number; maxDistanceToSurveyLineM: number | null; positioningToleranceM: number };
  port: { name: string; x: number; y: number };
}

function Num({ name, label, value, hint, step = "any" }: { name: string; label: string; value: number | string | null; hint?: string; step?: string }) {
  return (
    <label className="text-sm">
      <span className="block font-medium">{label}</span>
      <input name={name} type="number" step={step} defaultValue={value ?? ""} className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5 tabular-nums" />
      {hint ? <span className="text-xs text-sediment-600">{hint}</span> : null}
    </label>
  );
}

export function TargetListForm({ data, problem, busy }: { data: TargetFormData; problem?: string | null; busy: boolean }) {
  const c = data.constraints;
  const low = data.classLabels.slice(-2);
  return (
    <Form method="post" className="space-y-5 rounded-md border border-sand-200 bg-white p-4" aria-label="Make a target list">
      <input type="hidden" name="intent" value="create" />
      <h2 className="font-semibold">Make a target list</h2>
      {problem ? <FormProblemNote message={problem} /> : null}
      <div className="grid gap-4 md:grid-cols-3">
        <label className="text-sm">
          <span className="block font-medium">Name</span>
          <input name="name" required maxLength={120} defaultValue="Cruise targets" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
        </label>
        <label className="text-sm md:col-span-2">
          <span className="block font-medium">Ranked on</span>
          <select name="source" className="mt-1 block w-full rounded-sm border border-sand-300 bg-white px-2 py-1.5">
            {data.sources.map((s) => (
              <option key={s.value} value={s.value}>
                {s.label}
              </option>
            ))}
          </select>
        </label>
      </div>

      <fieldset className="grid gap-4 md:grid-cols-4">
        <legend className="mb-2 text-sm font-semibold">Corer and vessel</legend>
        <Num name="minWaterDepthM" label="Shallowest water (m)" value={c.minWaterDepthM} />
        <Num name="maxWaterDepthM" label="Deepest water (m)" value={c.maxWaterDepthM} />
        <Num name="maxSlopeDeg" label="Frame slope limit (°)" value={c.maxSlopeDeg} />
        <Num name="barrelLengthM" label="Barrel length (m)" value={c.barrelLengthM} hint="Commonly 3 or 6 m." />
        <Num name="requiredIntoOlderUnitM" label="Into the older unit (m)" value={c.requiredIntoOlderUnitM} hint="A useful core passes the horizon by 0.5–1 m." />
        <Num name="maxDistanceToSurveyLineM" label="Within this of a survey line (m)" value={c.maxDistanceToSurveyLineM} hint="Empty: no limit." />
        <Num name="positioningToleranceM" label="Positioning tolerance (m)" value={c.positioningToleranceM} />
        <label className="text-sm">
          <span className="block font-medium">Unassessed horizon</span>
          <select name="unassessedHorizon" defaultValue="refuse" className="mt-1 block w-full rounded-sm border border-sand-300 bg-white px-2 py-1.5">
            <option value="refuse">refuse the cell</option>
            <option value="core-to-refusal">core to refusal</option>
          </select>
        </label>
        <Num name="minSpacingM" label="Minimum spacing (m)" value={500} hint="Between any two targets, all modes together." />
        <label className="text-sm">
          <span className="block font-medium">Waypoint prefix</span>
          <input name="waypointPrefix" defaultValue="CT" maxLength={6} className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
        </label>
      </fieldset>

      <fieldset className="grid gap-4 md:grid-cols-4">
        <legend className="mb-2 text-sm font-semibold">Selection, in this order (transects first keep their stations)</legend>
        <label className="flex items-center gap-2 text-sm font-medium">
          <input type="checkbox" name="transect" value="on" /> Include a transect
        </label>
        <label className="text-sm md:col-span-3">
          <span className="block font-medium">Transect axis</span>
          <select name="axisRef" className="mt-1 block w-full rounded-sm border border-sand-300 bg-white px-2 py-1.5">
            <option value="">two points typed below</option>
            {data.axes.map((a) => (
              <option key={`${a.datasetId}:${a.featureIndex}`} value={`${a.datasetId}:${a.featureIndex}`}>
                {a.label} — {(a.lengthM / 1000).toFixed(1)} km
              </option>
            ))}
          </select>
        </label>
        <label className="text-sm md:col-span-2">
          <span className="block font-medium">Axis points (x y; x y — project CRS)</span>
          <input name="axisPoints" placeholder="484000 5024000; 488000 5024000" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5 tabular-nums" />
        </label>
        <label className="text-sm">
          <span className="block font-medium">Transect name</span>
          <input name="transectName" defaultValue="Channel A" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
        </label>
        <Num name="featureWidthM" label="Feature width (m)" value={200} />
        <Num name="marginWidthM" label="Margin width (m)" value={200} />
        <Num name="halfLengthM" label="Half-length (m)" value={1000} />
        <Num name="stationSpacingM" label="Station spacing (m)" value={500} />
        <label className="text-sm">
          <span className="block font-medium">Cross at (m along the axis)</span>
          <input name="chainagesM" defaultValue="1000" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5 tabular-nums" />
        </label>
        <Num name="bestFirst" label="Best first" value={10} step="1" />
        <Num name="control" label="Control cores" value={3} step="1" />
        <label className="text-sm">
          <span className="block font-medium">Control classes</span>
          <input name="controlClasses" defaultValue={low.join(", ")} className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
          <span className="text-xs text-sediment-600">Of {data.classLabels.join(", ")}.</span>
        </label>
        <Num name="learnMost" label="Learn most" value={2} step="1" />
      </fieldset>

      <fieldset className="grid gap-4 md:grid-cols-4">
        <legend className="mb-2 text-sm font-semibold">Cruise</legend>
        <label className="text-sm">
          <span className="block font-medium">Port</span>
          <input name="portName" defaultValue={data.port.name} className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
        </label>
        <Num name="portX" label="Port x (m)" value={Math.round(data.port.x)} />
        <Num name="portY" label="Port y (m)" value={Math.round(data.port.y)} />
        <Num name="speedKnots" label="Transit speed (kn)" value={8} />
        <Num name="stationHours" label="Station time per core (h)" value={1.5} />
        <Num name="shipDays" label="Ship days" value={2} />
        <Num name="hoursPerDay" label="Working hours per day" value={24} />
      </fieldset>
      <PrimaryButton type="submit" disabled={busy}>
        {busy ? "Choosing targets…" : "Make the list"}
      </PrimaryButton>
    </Form>
  );
}
