// The frame of every project page: the narrow rail of project navigation beside the page.
import { NavLink, Outlet } from "react-router";
import { requireProjectAccess } from "~/permissions.server";
import { can, ROLE_LABELS } from "~/permissions";
import { TopBar } from "~/components/TopBar";
import type { Route } from "./+types/project-layout";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { identity, project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  return {
    user: { name: identity.user.name, email: identity.user.email },
    project: { id: project.id, name: project.name, summary: project.summary, crsEpsg: project.crsEpsg, isDemo: project.isDemo },
    role,
  };
}

export default function ProjectLayout({ loaderData }: Route.ComponentProps) {
  const { user, project, role } = loaderData;
  // The rail in the order of the work: the landscape, its potential, then fieldwork and review.
  const groups: Array<{ title: string; links: Array<{ to: string; label: string; end: boolean; show: boolean }> }> = [
    {
      title: "Landscape",
      links: [
        { to: `/projects/${project.id}/map`, label: "Map", end: false, show: true },
        { to: `/projects/${project.id}/reconstructions`, label: "Reconstructions", end: false, show: true },
        { to: `/projects/${project.id}/data`, label: "Data", end: false, show: true },
        { to: `/projects/${project.id}/sites`, label: "Known sites", end: false, show: true },
        { to: `/projects/${project.id}/sea-level`, label: "Sea level", end: false, show: true },
      ],
    },
    {
      title: "Potential",
      links: [
        { to: `/projects/${project.id}/weights`, label: "Weights", end: false, show: true },
        { to: `/projects/${project.id}/weighing`, label: "Weighing sessions", end: false, show: true },
        { to: `/projects/${project.id}/validation`, label: "Validation", end: false, show: true },
        { to: `/projects/${project.id}/models`, label: "Models", end: false, show: can(role, "models.read") },
        { to: `/projects/${project.id}/uncertainty`, label: "Uncertainty", end: false, show: true },
      ],
    },
    {
      title: "Fieldwork and review",
      links: [
        { to: `/projects/${project.id}/targets`, label: "Core targets", end: false, show: true },
        { to: `/projects/${project.id}/regulator`, label: "Review desk", end: false, show: true },
        { to: `/projects/${project.id}/reviews`, label: "Reviews", end: false, show: true },
      ],
    },
    {
      title: "Project",
      links: [
        { to: `/projects/${project.id}`, label: "Overview", end: true, show: true },
        { to: `/projects/${project.id}/members`, label: "Members", end: false, show: can(role, "members.read") },
        { to: `/projects/${project.id}/audit`, label: "Audit log", end: false, show: can(role, "audit.read") },
        { to: `/projects/${project.id}/settings`, label: "Settings", end: false, show: can(role, "project.edit") },
      ],
    },
  ];
  return (
    <div className="flex min-h-screen flex-col">
      <TopBar user={user} />
      <div className="flex flex-1">
        <nav aria-label="Project" className="w-44 shrink-0 border-r border-sand-200 bg-sand-100 px-2 py-4">
          <p className="px-2 text-xs uppercase tracking-wide text-sediment-600">Project</p>
          <p className="px-2 font-semibold leading-tight">{project.name}</p>
          <p className="px-2 text-xs text-sediment-600">you are {ROLE_LABELS[role].toLowerCase()}</p>
          {groups.map((g) => (
            <div key={g.title} className="mt-4">
              <p className="px-2 text-[11px] uppercase tracking-wide text-sediment-600">{g.title}</p>
              <ul className="mt-0.5 space-y-0.5">
                {g.links
                  .filter((l) => l.show)
                  .map((l) => (
                    <li key={l.to}>
                      <NavLink
                        to={l.to}
                        end={l.end}
                        className={({ isActive }) =>
                          `block rounded-sm px-2 py-1 text-sm ${isActive ? "bg-white font-medium text-deep-800 shadow-sm" : "text-sediment-800 hover:bg-sand-200"}`
                        }
                      >
                        {l.label}
                      </NavLink>
                    </li>
                  ))}
              </ul>
            </div>
          ))}
        </nav>
        <main className="flex-1 px-8 py-6">
          <Outlet />
        </main>
      </div>
    </div>
  );
}
