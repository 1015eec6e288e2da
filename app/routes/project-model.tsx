// One trained model: progress while it trains (refreshed every second), then its card — inputs,
// sample counts, parameters, out-of-fold AUC and gain with their spread, training time — and the
// probability raster's download. A refusal shows the numbers the job counted. models.read only.
import { useEffect, useState } from "react";
import { Link, useRevalidator } from "react-router";
import { requireProjectAccess } from "~/permissions.server";
import { getModel, modelView } from "~/models.server";
import { refusal } from "~/security.server";
import { StatusBadge } from "~/components/StatusBadge";
import { Cautions } from "~/components/Cautions";
import { ModelCardView, type CardJson } from "~/components/models/ModelCardView";
import { ModelRefusal, type RefusalNumbers } from "~/components/models/ModelRefusal";
import { ValidationSummary } from "~/components/validation/ValidationSummary";
import type { ValidationView } from "~/components/validation/types";
import { scaleGradient } from "~/components/map/colour-scales";
import type { Route } from "./+types/project-model";

/** The probability raster as a picture (GET /api/models/:id/raster?preview=png), with its scale. */
function ProbabilityPicture({ modelId, ageKa, first }: { modelId: number; ageKa: number; first?: { step: number } }) {
  const [state, setState] = useState<"loading" | "shown" | "failed">("loading");
  return (
    <figure className="mt-3 max-w-xl" data-testid={first ? "model-first-look" : "model-picture"} data-state={state}>
      {first ? (
        <p className="mb-1 text-xs text-sediment-700">
          First look at display resolution (every {first.step} × {first.step} cells as one, the factors reduced as the map reduces them); the full-resolution raster follows.
        </p>
      ) : null}
      <img
        src={`/api/models/${modelId}/raster?preview=png&of=${first ? "display" : "full"}`}
        alt={`Probability of presence at ${ageKa} ka, from dark purple (0) to yellow (1); the sea at that age left blank`}
        className="w-full rounded-sm border border-sand-300 bg-deep-900 [image-rendering:pixelated]"
        onLoad={() => setState("shown")}
        onError={() => setState("failed")}
      />
      {state === "failed" ? <p className="mt-1 text-xs text-caution-800">The picture could not be drawn; the GeoTIFF below holds the values.</p> : null}
      <figcaption className="mt-2 text-xs text-sediment-700">
        <span className="flex items-center gap-2">
          <span className="tabular-nums">0</span>
          <span className="inline-block h-2.5 w-48 rounded-sm border border-sediment-400" style={{ background: scaleGradient("viridis") }} aria-hidden="true" />
          <span className="tabular-nums">1</span>
          <span>share of trees voting “site” (viridis)</span>
        </span>
        <span className="mt-1 block">Known sites are not marked: the model peaks on the sites it was trained on. North is up; the sea at {ageKa} ka is left blank.</span>
      </figcaption>
    </figure>
  );
}

/** The model held against the sites and cores as a scoring is (GET /api/models/:id/validation). */
function ModelValidation({ projectId, modelId, name }: { projectId: number; modelId: number; name: string }) {
  const [state, setState] = useState<{ v?: ValidationView; error?: string } | null>(null);
  useEffect(() => {
    const ctl = new AbortController();
    fetch(`/api/models/${modelId}/validation`, { signal: ctl.signal })
      .then(async (res) => {
        const body = (await res.json()) as { validation?: ValidationView; error?: { message?: string } };
        setState(res.ok && body.validation ? { v: body.validation } : { error: body.error?.message ?? `The validation could not be read (${res.status}).` });
      })
      .catch((e: unknown) => {
        if ((e as Error).name !== "AbortError") setState({ error: "The validation could not be read; try again." });
      });
    return () => ctl.abort();
  }, [modelId]);
  return (
    <section aria-labelledby="model-validation" className="rounded-md border border-sand-200 bg-white p-4 text-sm">
      <h2 id="model-validation" className="font-semibold">
        Against the sites, on the map
      </h2>
      <p className="mt-1 text-xs text-sediment-600">
        The probability raster held against the project's sites and cores as a scoring's potential is. The model has seen these sites, so these figures flatter it: the out-of-fold
        figures above are the fair ones. Compare it with a weight set on the{" "}
        <Link className="underline" to={`/projects/${projectId}/validation`}>
          Validation
        </Link>{" "}
        page.
      </p>
      {state === null ? <p className="mt-2 text-sediment-600">Validating…</p> : state.error ? <p className="mt-2">{state.error}</p> : <ValidationSummary name={name} v={state.v!} />}
    </section>
  );
}

export const meta = ({ data }: Route.MetaArgs) => [{ title: `${data?.model.name ?? "Model"} · Lowstand` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "models.read");
  const id = /^\d{1,9}$/.test(params.modelId) ? Number(params.modelId) : NaN;
  const m = Number.isFinite(id) ? await getModel(id) : null;
  if (!m || m.projectId !== project.id) throw refusal(request, 404, "no_such_model", "There is no such model in this project.");
  return { projectId: project.id, model: modelView(m) };
}

export default function ProjectModel({ loaderData }: Route.ComponentProps) {
  const { projectId, model } = loaderData;
  const revalidator = useRevalidator();
  const running = model.status === "running";
  useEffect(() => {
    if (!running) return;
    const t = setInterval(() => {
      if (revalidator.state === "idle") void revalidator.revalidate();
    }, 1000);
    return () => clearInterval(t);
  }, [running, revalidator]);
  const card = model.card as (CardJson & { refused?: undefined }) | (RefusalNumbers & { refused: boolean }) | null;
  const refusedNumbers = card && "refused" in card && card.refused ? (card as RefusalNumbers) : null;
  const fullCard = card && model.status === "published" && "method" in card ? (card as CardJson) : null;
  const result = model.result as { classes?: { label: string; areaKm2: number; share: number }[]; probability?: { areaKm2: number; mean: number | null }; preview?: { step: number } | null } | null;
  const firstLook = result?.preview ?? null;
  return (
    <div className="max-w-5xl space-y-5" data-testid="model-page" data-status={model.status}>
      <p className="text-sm">
        <Link className="underline" to={`/projects/${projectId}/models`}>
          Models
        </Link>
      </p>
      <div className="flex flex-wrap items-center gap-3">
        <h1 className="text-2xl font-semibold">{model.name}</h1>
        <StatusBadge status={model.status} progress={model.progress} />
      </div>
      <p className="text-sm text-sediment-700">
        Probability of presence at {model.ageKa} ka on {model.reconstruction.name || `reconstruction ${model.reconstruction.id}`}
        {model.job?.step && running ? ` — ${model.job.step}` : ""}.
      </p>
      {running ? (
        <div className="h-2 w-full max-w-md rounded-sm bg-sand-200" role="progressbar" aria-valuenow={Math.round(model.progress * 100)} aria-valuemin={0} aria-valuemax={100} aria-label="Training">
          <div className="h-2 rounded-sm bg-deep-500" style={{ width: `${Math.round(model.progress * 100)}%` }} />
        </div>
      ) : null}
      {running && firstLook ? <ProbabilityPicture key="first" modelId={model.id} ageKa={model.ageKa} first={firstLook} /> : null}
      {model.status === "failed" ? (
        refusedNumbers ? (
          <ModelRefusal message={model.error ?? ""} numbers={refusedNumbers} />
        ) : (
          <p role="alert" className="rounded-md border border-caution-600 bg-white p-3 text-sm text-caution-800">
            {model.error ?? "The model could not be trained."}
          </p>
        )
      ) : null}
      {fullCard ? (
        <>
          <ModelCardView card={fullCard} />
          <ModelValidation projectId={projectId} modelId={model.id} name={model.name} />
          {result?.classes ? (
            <section aria-labelledby="raster-classes" className="rounded-md border border-sand-200 bg-white p-4 text-sm">
              <h2 id="raster-classes" className="font-semibold">
                The probability raster
              </h2>
              <p className="mt-1 text-xs text-sediment-600">Land at {model.ageKa} ka by the project's classes; the probability is relative to searched ground.</p>
              <table className="mt-1">
                <tbody>
                  {result.classes.map((c) => (
                    <tr key={c.label}>
                      <td className="pr-4">{c.label}</td>
                      <td className="pr-4 tabular-nums">{c.areaKm2.toFixed(2)} km²</td>
                      <td className="tabular-nums">{(c.share * 100).toFixed(1)} %</td>
                    </tr>
                  ))}
                </tbody>
              </table>
              <ProbabilityPicture modelId={model.id} ageKa={model.ageKa} />
              {model.downloads.map((d) => (
                <a key={d.name} className="mt-2 inline-block underline" href={d.href}>
                  Download the probability GeoTIFF
                </a>
              ))}
            </section>
          ) : null}
        </>
      ) : null}
      <Cautions compact />
    </div>
  );
}
