// The map workspace of a project: the newest published reconstruction's layers on a deck.gl map
// (browser only), the evidence and planning layers, a cursor readout, the cross-section and the
// sea-level strip. The page server-renders its chrome with the same payload the map API gives
// this caller (mapPayload decides what each role may see); deck.gl itself loads in the browser.
// With an adopted weight-set version, the potential at the age on the strip is scored in the browser
// (the weighing page's worker and code) and drawn over the layers, switchable in the layer panel.
import { useQuery } from "@tanstack/react-query";
import { useCallback, useMemo, useState } from "react";
import { Link } from "react-router";
import { adoptedVersion } from "~/weight-sets.server";
import { potentialOverlay, potentialText } from "~/components/scoring/potential-view";
import { useLiveScoring } from "~/components/scoring/useLiveScoring";
import { evidenceFromOverlays } from "~/components/scoring/evidence";
import type { WeightSetContent } from "~/scoring/weight-set";
import type { ScoreTarget } from "~/scoring/scoring-inputs";
import { requireProjectAccess } from "~/permissions.server";
import { can } from "~/permissions";
import { mapPayload } from "~/map.server";
import { mapQuery } from "~/components/map/queries";
import type { MapData } from "~/components/map/types";
import { MapWorkspace } from "~/components/map/MapWorkspace";
import type { Route } from "./+types/project-map";

export const meta: Route.MetaFunction = () => [{ title: "Map · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "project.read");
  const requested = new URL(request.url).searchParams.get("reconstruction");
  // (the server types GeoJSON geometry loosely; the shape is the API's, checked by the map's tests)
  const map = (await mapPayload(project, { userId: identity.user.id, role }, requested)) as unknown as MapData;
  const adopted = await adoptedVersion(project.id);
  return {
    projectId: project.id,
    mayReconstruct: can(role, "runs.start"),
    map,
    requested,
    adopted: adopted ? { setId: adopted.set.id, name: adopted.set.name, version: adopted.version.version, content: adopted.version.content } : null,
  };
}

export default function ProjectMap({ loaderData }: Route.ComponentProps) {
  const { projectId, mayReconstruct } = loaderData;
  const requested = /^\d{1,9}$/.test(loaderData.requested ?? "") ? Number(loaderData.requested) : null;
  const { data, error } = useQuery({ ...mapQuery(projectId, requested), initialData: loaderData.map });
  // The workspace takes the whole area beside the project rail (the layout pads other pages).
  return (
    <div className="-mx-8 -my-6 flex h-[calc(100vh-2.75rem)] flex-col" data-testid="map-page">
      {!data ? (
        <Frame>
          <p role="alert" className="text-sm text-caution-100">
            {error?.message ?? "The map could not be loaded."}
          </p>
        </Frame>
      ) : !data.reconstruction ? (
        <Frame>
          <h1 className="text-xl font-semibold text-sand-50">Reconstruct the landscape first</h1>
          <p className="mt-2 max-w-lg text-sm text-sea-200">
            The map shows a published reconstruction: shorelines, lakes and rivers at each age, flooding age and the hillshade of the analysis surface. There is none in this project yet.
          </p>
          <Link to={`/projects/${projectId}/reconstructions`} className="mt-4 inline-block rounded-sm bg-sand-50 px-3 py-1.5 text-sm font-medium text-deep-900 hover:bg-sand-200">
            {mayReconstruct ? "Start a reconstruction" : "See the reconstructions"}
          </Link>
        </Frame>
      ) : (
        <MapWithPotential key={data.reconstruction.id} data={data} reconstruction={data.reconstruction} adopted={loaderData.adopted} projectId={projectId} />
      )}
    </div>
  );
}

function Frame({ children }: { children: React.ReactNode }) {
  return <div className="flex flex-1 flex-col items-center justify-center bg-deep-950 p-8 text-center">{children}</div>;
}

type Adopted = { setId: number; name: string; version: number; content: WeightSetContent } | null;

/** The workspace with the adopted weights' potential at the age on the strip, scored in the browser. */
function MapWithPotential({ data, reconstruction: r, adopted, projectId }: { data: MapData; reconstruction: NonNullable<MapData["reconstruction"]>; adopted: Adopted; projectId: number }) {
  const [ageKa, setAgeKa] = useState(r.agesKa[0]);
  const [on, setOn] = useState(true);
  const target: ScoreTarget = useMemo(() => ({ kind: "age", ageKa }), [ageKa]);
  const evidence = useMemo(() => evidenceFromOverlays(data.overlays), [data.overlays]);
  const live = useLiveScoring({ reconstruction: r, content: adopted && on ? adopted.content : null, target, evidence, compare: null });
  const res = live.result;
  // (a result for the age before stays drawn until this age's arrives, a frame or two later)
  const overlay = useMemo(() => (adopted && on ? potentialOverlay(res, 0.8, res?.checksum ?? "") : null), [adopted, on, res]);
  const extraReadout = useCallback(
    (col: number, row: number) => {
      const text = adopted && on ? potentialText(res, col, row) : null;
      return text === null ? [] : [{ label: `Potential (${ageKa} ka)`, text }];
    },
    [adopted, on, res, ageKa],
  );
  const overlaySwitch = adopted
    ? {
        label: "Potential (adopted weights)",
        on,
        onChange: setOn,
        note: (
          <>
            “{adopted.name}” v{adopted.version}, scored in your browser at the age on the strip with the scoring job&apos;s own code
            {live.error ? <span className="text-caution-800"> — {live.error}</span> : live.loading ? " — loading its layers…" : ""}. Full resolution and downloads on the{" "}
            <Link className="underline" to={`/projects/${projectId}/weights/${adopted.setId}`}>
              weight set&apos;s page
            </Link>
            .
          </>
        ),
      }
    : undefined;
  // The map counts as drawn at an age once the potential shown is that age's (or there is none to wait for).
  const overlayReady = !adopted || !on || !!live.error || (!!res && res.target.kind === "age" && res.target.ageKa === ageKa);
  return <MapWorkspace data={data} reconstruction={r} extras={{ overlay, extraReadout, onAgeChange: setAgeKa, overlaySwitch, overlayReady }} />;
}
