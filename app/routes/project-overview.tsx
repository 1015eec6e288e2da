import { requireProjectAccess } from "~/permissions.server";
import { memberCount } from "~/projects.server";
import { projectStanding, type Stage } from "~/overview.server";
import { Link } from "react-router";
import { Cautions } from "~/components/Cautions";
import type { Route } from "./+types/project-overview";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  return {
    project: { name: project.name, summary: project.summary, crsEpsg: project.crsEpsg, isDemo: project.isDemo, createdAt: project.createdAt.toISOString() },
    members: await memberCount(project.id),
    stages: await projectStanding(project.id, role),
    projectId: project.id,
  };
}

export const meta = ({ data }: Route.MetaArgs) => [{ title: `${data?.project.name ?? "Project"} · Lowstand` }];

export default function ProjectOverview({ loaderData }: Route.ComponentProps) {
  const { project, members, stages, projectId } = loaderData;
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
      <Standing stages={stages} projectId={projectId} />
      <Cautions compact />
    </div>
  );
}

const STATE_MARK: Record<Stage["state"], { glyph: string; words: string; tone: string }> = {
  ready: { glyph: "●", words: "in hand", tone: "border-sediment-600 text-sediment-800" },
  working: { glyph: "◐", words: "under way", tone: "border-deep-500 text-deep-800" },
  "to-do": { glyph: "○", words: "not yet", tone: "border-sand-500 text-sand-700" },
};

/** The stages of the work in order, each with its state (glyph and words, never colour alone) and the next step. */
function Standing({ stages, projectId }: { stages: Stage[]; projectId: number }) {
  const firstToDo = stages.find((s) => s.state === "to-do" && s.next);
  return (
    <section aria-labelledby="standing" className="space-y-2">
      <h2 id="standing" className="font-semibold">
        Where the project stands
      </h2>
      {firstToDo ? (
        <p className="rounded-sm border-l-4 border-ember-500 bg-white px-3 py-2 text-sm" data-testid="next-step">
          <span className="font-medium">Next: </span>
          {firstToDo.next}{" "}
          <Link to={`/projects/${projectId}/${firstToDo.path}`} className="underline">
            Go to {firstToDo.title.toLowerCase()}
          </Link>
        </p>
      ) : null}
      <ol className="divide-y divide-sand-200 rounded-md border border-sand-200 bg-white">
        {stages.map((s, i) => {
          const mark = STATE_MARK[s.state];
          return (
            <li key={s.key} className="flex items-start gap-3 px-4 py-2.5" data-stage={s.key} data-state={s.state}>
              <span className="w-5 pt-0.5 text-right text-xs tabular-nums text-sediment-600">{i + 1}</span>
              <div className="min-w-0 flex-1">
                <div className="flex items-baseline gap-2">
                  <Link to={`/projects/${projectId}/${s.path}`} className="font-medium underline decoration-sand-400 underline-offset-2 hover:decoration-sediment-800">
                    {s.title}
                  </Link>
                  <span className={`inline-flex items-center gap-1 rounded-sm border px-1.5 py-0.5 text-xs ${mark.tone}`}>
                    <span aria-hidden="true">{mark.glyph}</span>
                    {mark.words}
                  </span>
                </div>
                <p className="text-sm text-sediment-700">{s.summary}</p>
              </div>
            </li>
          );
        })}
      </ol>
    </section>
  );
}
