// One reconstruction: a progress bar while it runs (refreshed from the API), then its layers with
// previews, units, provenance and GeoTIFF downloads.
import { useQuery } from "@tanstack/react-query";
import { useState } from "react";
import { Form, Link, useActionData, useRevalidator } from "react-router";
import { requireProjectAccess } from "~/permissions.server";
import { getReconstruction } from "~/reconstructions.server";
import { reconstructionView } from "~/reconstruction-view.server";
import { requestCancel } from "~/jobs.server";
import { recordAudit } from "~/audit.server";
import { db } from "~/db.server";
import { formAction } from "~/route-helpers.server";
import { refusal } from "~/security.server";
import { UserError } from "~/errors";
import { can } from "~/permissions";
import { StatusBadge } from "~/components/StatusBadge";
import { DangerButton, FormOutcome } from "~/components/forms/Field";
import type { Manifest } from "~/terrain/reconstruct";
import type { Route } from "./+types/project-reconstruction";

export const meta = ({ data }: Route.MetaArgs) => [{ title: `${data?.reconstruction.name || `Reconstruction ${data?.reconstruction.id ?? ""}`} · Lowstand` }];

async function load(request: Request, params: Route.LoaderArgs["params"], capability: "project.read" | "runs.start") {
  const access = await requireProjectAccess(request, params.projectId, capability);
  const id = /^\d{1,9}$/.test(params.reconstructionId) ? Number(params.reconstructionId) : NaN;
  const r = Number.isFinite(id) ? await getReconstruction(access.project.id, id) : null;
  if (!r) throw refusal(request, 404, "no_such_reconstruction", "There is no such reconstruction in this project.");
  return { ...access, r };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { r, role } = await load(request, params, "project.read");
  return { reconstruction: reconstructionView(r), mayCancel: can(role, "runs.start") };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { r, identity, project } = await load(request, params, "runs.start");
  const form = await request.formData();
  return formAction(async () => {
    if (form.get("intent") !== "cancel" || !r.jobRunId) throw new UserError(400, "unknown_intent", "The only thing to do here is cancel a running reconstruction.");
    const result = await requestCancel(r.jobRunId, identity.user.id);
    if (result === "already_ended") throw new UserError(409, "already_ended", "The reconstruction has already ended.");
    await recordAudit(db(), { actorUserId: identity.user.id, projectId: project.id, action: "job.cancel_requested", detail: { jobRunId: r.jobRunId, reconstructionId: r.id }, clientAddress: context?.clientAddress });
    return { ok: "Cancelling: the engine stops at its next check." };
  });
}

type View = ReturnType<typeof reconstructionView>;

export default function ProjectReconstruction({ loaderData }: Route.ComponentProps) {
  const { mayCancel } = loaderData;
  const revalidator = useRevalidator();
  const result = useActionData<typeof action>();
  // While it runs, the status comes from the API every second (the page can be left and returned to).
  const { data } = useQuery<{ reconstruction: View }>({
    queryKey: ["reconstruction", loaderData.reconstruction.id],
    queryFn: async () => {
      const res = await fetch(`/api/reconstructions/${loaderData.reconstruction.id}`);
      if (!res.ok) throw new Error(String(res.status));
      const json = await res.json();
      if (json.reconstruction.status !== "running") revalidator.revalidate();
      return json;
    },
    initialData: { reconstruction: loaderData.reconstruction },
    refetchInterval: (q) => (q.state.data?.reconstruction.status === "running" ? 1000 : false),
  });
  const r = data.reconstruction.status === "running" ? data.reconstruction : loaderData.reconstruction;
  const job = r.job;
  const manifest = r.manifest as unknown as Manifest | null;
  return (
    <div className="max-w-5xl space-y-6" data-testid="reconstruction" data-status={r.status}>
      <header className="flex items-baseline gap-3">
        <h1 className="text-2xl font-semibold">{r.name || `Reconstruction ${r.id}`}</h1>
        <StatusBadge status={r.status} />
      </header>
      <FormOutcome result={result} />

      {r.status === "running" && job ? (
        <section aria-label="Progress" className="space-y-2">
          <div className="flex items-center gap-3">
            <progress max={1} value={job.progress} aria-label="Progress" className="h-3 w-96 accent-ember-500" />
            <span className="text-sm tabular-nums">{Math.round(job.progress * 100)} %</span>
          </div>
          <p className="text-sm text-sediment-600">
            {job.state === "queued" ? "Waiting for a worker…" : job.step || "Starting…"}
            {job.attempt > 1 ? ` (attempt ${job.attempt})` : ""}
            {job.cancelRequested ? " — cancelling" : ""}
          </p>
          {mayCancel && !job.cancelRequested ? (
            <Form method="post">
              <input type="hidden" name="intent" value="cancel" />
              <DangerButton type="submit">Cancel the reconstruction</DangerButton>
            </Form>
          ) : null}
        </section>
      ) : null}

      {r.status === "failed" ? (
        <p role="alert" className="rounded-sm border-l-4 border-caution-600 bg-caution-100 px-3 py-2 text-sm text-caution-800">
          The reconstruction failed: {r.error ?? "see the job's message."}
        </p>
      ) : null}
      {r.status === "cancelled" ? <p className="text-sm text-sediment-600">Cancelled. Start it again from the Reconstructions page with the same inputs.</p> : null}

      {manifest ? (
        <p>
          <Link to={`/projects/${r.projectId}/map?reconstruction=${r.id}`} className="rounded-sm bg-deep-800 px-3 py-1.5 text-sm text-sand-50 hover:bg-deep-700">
            Open on the map
          </Link>
        </p>
      ) : null}
      {manifest ? <Layers id={r.id} manifest={manifest} /> : null}
      <Provenance r={r} manifest={manifest} />
    </div>
  );
}

function Layers({ id, manifest }: { id: number; manifest: Manifest }) {
  const [age, setAge] = useState<number>(manifest.agesKa[0]);
  const fixed = manifest.layers.filter((l) => l.ageKa === null);
  const perAge = manifest.layers.filter((l) => l.ageKa === age);
  const summary = manifest.ages.find((a) => a.ageKa === age);
  const href = (name: string, ageKa: number | null) => `/api/reconstructions/${id}/layers/${name}${ageKa === null ? "" : `?age=${ageKa}`}`;
  const preview = (name: string, ageKa: number | null) => `/api/reconstructions/${id}/layers/${name}/preview.png${ageKa === null ? "" : `?age=${ageKa}`}`;
  const fmt = (v: number | null) => (v === null ? "—" : Math.abs(v) >= 100 ? v.toFixed(0) : v.toFixed(2));
  const table = (layers: typeof manifest.layers) => (
    <ul className="grid gap-3 sm:grid-cols-2 lg:grid-cols-3">
      {layers.map((l) => (
        <li key={`${l.name}-${l.ageKa}`} className="rounded-md border border-sand-200 bg-white p-2">
          <img src={preview(l.name, l.ageKa)} alt={`${l.name} preview`} loading="lazy" className="block h-36 w-full bg-deep-950 object-contain" />
          <p className="mt-1 font-medium">{l.name.replace(/_/g, " ")}</p>
          <p className="text-xs text-sediment-600 tabular-nums">
            {l.units || "—"} · min {fmt(l.stats.min)} · max {fmt(l.stats.max)} · {l.stats.validCount.toLocaleString("en")} cells
          </p>
          <a className="text-xs text-deep-700 underline" href={href(l.name, l.ageKa)}>
            GeoTIFF
          </a>
        </li>
      ))}
    </ul>
  );
  return (
    <section className="space-y-4">
      <h2 className="text-lg font-semibold">Layers for every age</h2>
      {table(fixed)}
      <div className="flex flex-wrap items-center gap-2">
        <h2 className="text-lg font-semibold">Layers at</h2>
        {manifest.agesKa.map((a) => (
          <button
            key={a}
            type="button"
            onClick={() => setAge(a)}
            aria-pressed={a === age}
            className={`rounded-sm border px-2 py-0.5 text-sm tabular-nums ${a === age ? "border-ember-500 bg-ember-300/30" : "border-sand-300 bg-white"}`}
          >
            {a} ka
          </button>
        ))}
      </div>
      {summary ? (
        <p className="text-sm text-sediment-600 tabular-nums">
          Sea level {summary.seaLevelM === null ? "varies" : `${summary.seaLevelM.toFixed(1)} m`} · land {summary.counts.land.toLocaleString("en")} · intertidal{" "}
          {summary.counts.intertidal.toLocaleString("en")} · lake {summary.counts.lake.toLocaleString("en")} · sea {summary.counts.sea.toLocaleString("en")} cells · {summary.features.mouths} river
          mouths · {summary.features.confluences} confluences
        </p>
      ) : null}
      {table(perAge)}
    </section>
  );
}

function Provenance({ r, manifest }: { r: View; manifest: Manifest | null }) {
  const p = r.params as Record<string, unknown>;
  return (
    <section>
      <h2 className="text-lg font-semibold">Where these layers come from</h2>
      <dl className="mt-2 grid grid-cols-[14rem_1fr] gap-x-6 gap-y-1 text-sm">
        <dt className="text-sediment-600">Analysis surface</dt>
        <dd>{manifest ? manifest.analysisSurface.note : p.horizonDatasetId ? "buried horizon where assessed, seabed elsewhere" : "today's seabed"}</dd>
        <dt className="text-sediment-600">Sea level</dt>
        <dd>
          {manifest ? `${manifest.seaLevel.label}. ${manifest.seaLevel.citations.join(" ")}` : p.curveId ? "a project curve" : "shipped global curve (global, far-field approximation)"}
          {manifest?.seaLevel.warnings.length ? <span className="block text-caution-800">{manifest.seaLevel.warnings.join(" ")}</span> : null}
        </dd>
        <dt className="text-sediment-600">Ages (ka BP)</dt>
        <dd className="tabular-nums">{(p.agesKa as number[]).join(", ")}</dd>
        <dt className="text-sediment-600">Ocean boundary · tidal range · streams</dt>
        <dd>
          {(p.oceanSides as string[]).join(", ")} side · {String(p.tidalRangeM)} m · {String(p.streamThresholdKm2)} km²
        </dd>
        {manifest ? (
          <>
            <dt className="text-sediment-600">Connectivity</dt>
            <dd>{manifest.connectivity}</dd>
          </>
        ) : null}
        <dt className="text-sediment-600">Engine · inputs</dt>
        <dd className="text-xs">
          version {r.engineVersion} · inputs hash <span className="font-mono">{r.inputsHash.slice(0, 16)}…</span>
        </dd>
        {manifest?.warnings.length ? (
          <>
            <dt className="text-sediment-600">Warnings</dt>
            <dd>{manifest.warnings.join(" ")}</dd>
          </>
        ) : null}
      </dl>
    </section>
  );
}
