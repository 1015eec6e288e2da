import { requireProjectAccess } from "~/permissions.server";
import { can } from "~/permissions";
import { memberCount } from "~/projects.server";
import { listDatasets } from "~/datasets.server";
import { Link } from "react-router";
import { Cautions } from "~/components/Cautions";
import type { Route } from "./+types/project-overview";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  return {
    project: { name: project.name, summary: project.summary, crsEpsg: project.crsEpsg, isDemo: project.isDemo, createdAt: project.createdAt.toISOString() },
    members: await memberCount(project.id),
    datasets: (await listDatasets(project.id)).length,
    projectId: project.id,
    mayUpload: can(role, "data.upload"),
  };
}

export const meta = ({ data }: Route.MetaArgs) => [{ title: `${data?.project.name ?? "Project"} · Lowstand` }];

export default function ProjectOverview({ loaderData }: Route.ComponentProps) {
  const { project, members, mayUpload, datasets, projectId } = loaderData;
  return (
    <div className="max-w-3xl space-y-6">
      <header>
        <h1 className="text-2xl font-semibold">{project.name}</h1>
        {project.isDemo ? <p className="text-xs text-sand-700">Demonstration project: every place, person and record in it is invented.</p> : null}
        <p className="mt-2 text-sediment-800">{project.summary}</p>
      </header>
      <dl className="grid grid-cols-2 gap-x-6 gap-y-1 text-sm sm:grid-cols-3">
        <dt className="text-sediment-600">Projected CRS</dt>
        <dd className="tabular-nums sm:col-span-2">EPSG:{project.crsEpsg}</dd>
        <dt className="text-sediment-600">Members</dt>
        <dd className="tabular-nums sm:col-span-2">{members}</dd>
        <dt className="text-sediment-600">Created</dt>
        <dd className="tabular-nums sm:col-span-2">{project.createdAt.slice(0, 10)}</dd>
      </dl>
      <section className="rounded-md border border-dashed border-sand-400 bg-white p-4">
        <h2 className="font-semibold">
          <Link to={`/projects/${projectId}/data`} className="underline">
            Data
          </Link>
        </h2>
        <p className="mt-1 text-sm text-sediment-600">
          {datasets > 0
            ? `${datasets} dataset${datasets === 1 ? "" : "s"} of evidence.`
            : mayUpload
              ? "No datasets yet. Upload a bathymetry grid to begin; sub-bottom picks, survey lines and known sites follow."
              : "No datasets yet. An analyst or lead of this project uploads the bathymetry grid to begin."}
        </p>
      </section>
      <Cautions compact />
    </div>
  );
}
