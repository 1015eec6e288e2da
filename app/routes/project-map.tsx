// The map workspace of a project: the newest published reconstruction's layers on a deck.gl map
// (browser only), the evidence and planning layers, a cursor readout, the cross-section and the
// sea-level strip. The page server-renders its chrome with the same payload the map API gives
// this caller (mapPayload decides what each role may see); deck.gl itself loads in the browser.
import { useQuery } from "@tanstack/react-query";
import { Link } from "react-router";
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
  return { projectId: project.id, mayReconstruct: can(role, "runs.start"), map, requested };
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
        <MapWorkspace key={data.reconstruction.id} data={data} reconstruction={data.reconstruction} />
      )}
    </div>
  );
}

function Frame({ children }: { children: React.ReactNode }) {
  return <div className="flex flex-1 flex-col items-center justify-center bg-deep-950 p-8 text-center">{children}</div>;
}
