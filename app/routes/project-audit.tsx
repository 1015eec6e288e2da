import { requireProjectAccess } from "~/permissions.server";
import { formatUtc } from "~/format";
import { listAudit } from "~/projects.server";
import type { Route } from "./+types/project-audit";

export const meta = () => [{ title: "Audit log · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "audit.read");
  const rows = await listAudit(project.id);
  return { entries: rows.map((r) => ({ ...r, at: r.at.toISOString() })) };
}

export default function ProjectAudit({ loaderData }: Route.ComponentProps) {
  return (
    <div>
      <h1 className="text-2xl font-semibold">Audit log</h1>
      <p className="mt-1 text-sm text-sediment-600">Who did what to this project, and when (newest first, UTC).</p>
      {loaderData.entries.length === 0 ? (
        <p className="mt-4 text-sm text-sediment-600">Nothing recorded yet.</p>
      ) : (
        <table className="mt-4 w-full text-sm">
          <thead className="border-b border-sand-300 text-left text-xs uppercase tracking-wide text-sediment-600">
            <tr>
              <th className="py-1 pr-4">When</th>
              <th className="py-1 pr-4">Who</th>
              <th className="py-1 pr-4">What</th>
              <th className="py-1">Detail</th>
            </tr>
          </thead>
          <tbody>
            {loaderData.entries.map((e) => (
              <tr key={e.id} className="border-b border-sand-100 align-top">
                <td className="py-1 pr-4 tabular-nums whitespace-nowrap">{formatUtc(e.at, true)}</td>
                <td className="py-1 pr-4">{e.actorName ?? "—"}</td>
                <td className="py-1 pr-4 font-medium">{e.action}</td>
                <td className="py-1 text-xs text-sediment-600">{JSON.stringify(e.detail)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </div>
  );
}
