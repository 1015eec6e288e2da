// The map workspace of a project: the newest published reconstruction's layers on a deck.gl map
// (browser only), the evidence and planning layers, a cursor readout, the cross-section and the
// sea-level strip. The page server-renders its chrome; the map's data comes from the map API.
import { useQuery } from "@tanstack/react-query";
import { Link, useSearchParams } from "react-router";
import { requireProjectAccess } from "~/permissions.server";
import { can } from "~/permissions";
import { mapQuery } from "~/components/map/queries";
import { MapWorkspace } from "~/components/map/MapWorkspace";
import type { Route } from "./+types/project-map";

export const meta: Route.MetaFunction = () => [{ title: "Map · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  return { projectId: project.id, mayReconstruct: can(role, "runs.start") };
}

export default function ProjectMap({ loaderData }: Route.ComponentProps) {
  const { projectId, mayReconstruct } = loaderData;
  const [search] = useSearchParams();
  const requested = /^\d{1,9}$/.test(search.get("reconstruction") ?? "") ? Number(search.get("reconstruction")) : null;
  const { data, error, isPending } = useQuery(mapQuery(projectId, requested));
  // The workspace takes the whole area beside the project rail (the layout pads other pages).
  return (
    <div className="-mx-8 -my-6 flex h-[calc(100vh-2.75rem)] flex-col" data-testid="map-page">
      {isPending ? (
        <Frame>
          <p className="text-sm text-sea-200">Loading the map…</p>
        </Frame>
      ) : error ? (
        <Frame>
          <p role="alert" className="text-sm text-caution-100">
            {error.message}
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
