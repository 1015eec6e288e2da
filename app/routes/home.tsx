// The front page: the projects this installation holds, and where to begin.
import { asc } from "drizzle-orm";
import { db } from "~/db.server";
import { projects } from "~/db/schema";
import { Cautions } from "~/components/Cautions";
import type { Route } from "./+types/home";

export function meta() {
  return [
    { title: "Lowstand — drowned landscapes, site potential, core targets" },
    { name: "description", content: "Reconstruct drowned shelf landscapes at chosen ages, score site potential, validate it and plan cores." },
  ];
}

export async function loader() {
  const rows = await db()
    .select({ slug: projects.slug, name: projects.name, summary: projects.summary, crsEpsg: projects.crsEpsg, isDemo: projects.isDemo })
    .from(projects)
    .orderBy(asc(projects.name));
  return { projects: rows };
}

export default function Home({ loaderData }: Route.ComponentProps) {
  const { projects: list } = loaderData;
  return (
    <div className="flex min-h-screen flex-col">
      <header className="border-b border-sand-200 bg-deep-900 text-sand-50">
        <div className="mx-auto flex max-w-5xl items-baseline gap-4 px-6 py-4">
          <span className="text-xl font-semibold tracking-tight">Lowstand</span>
          <span className="text-sm text-sea-200">drowned landscapes · site potential · core targets</span>
        </div>
        <ShelfProfile />
      </header>
      <main className="mx-auto w-full max-w-5xl flex-1 px-6 py-8">
        <h1 className="text-2xl font-semibold">Projects</h1>
        {list.length === 0 ? (
          <p className="mt-4 text-sediment-600">
            No projects yet. Create a project, then upload a bathymetry grid to begin.
          </p>
        ) : (
          <ul className="mt-4 grid gap-4 sm:grid-cols-2" aria-label="Projects">
            {list.map((p) => (
              <li key={p.slug} className="rounded-md border border-sand-200 bg-white p-4 shadow-sm">
                <div className="flex items-baseline justify-between gap-2">
                  <h2 className="text-lg font-semibold">{p.name}</h2>
                  {p.isDemo ? (
                    <span className="rounded-sm bg-sand-100 px-1.5 py-0.5 text-xs text-sand-700">demo · invented</span>
                  ) : null}
                </div>
                <p className="mt-1 text-sm text-sediment-600">{p.summary}</p>
                <p className="mt-2 text-xs text-sediment-400 tabular-nums">EPSG:{p.crsEpsg}</p>
              </li>
            ))}
          </ul>
        )}
      </main>
      <footer className="mx-auto w-full max-w-5xl px-6 pb-8">
        <Cautions compact />
      </footer>
    </div>
  );
}

/** A small decorative shelf profile under the title bar: sea level cutting a drowned valley. */
function ShelfProfile() {
  return (
    <svg viewBox="0 0 600 40" preserveAspectRatio="none" className="block h-8 w-full" aria-hidden="true">
      <path d="M0 14 H600 V40 H0Z" fill="var(--color-deep-700)" />
      <path
        d="M0 30 C60 28 90 20 140 24 S210 36 250 33 S320 18 380 22 S470 34 520 30 S580 26 600 27 V40 H0Z"
        fill="var(--color-sand-300)"
      />
      <path d="M0 14 H600" stroke="var(--color-ember-500)" strokeWidth="1.5" />
    </svg>
  );
}
