// The front page: signed out, what Lowstand is and a way in; signed in, your projects.
import { Link } from "react-router";
import { getIdentity } from "~/auth.server";
import { listProjectsForUser } from "~/projects.server";
import { ROLE_LABELS } from "~/permissions";
import { Cautions } from "~/components/Cautions";
import { TopBar } from "~/components/TopBar";
import type { Route } from "./+types/home";

export function meta() {
  return [
    { title: "Lowstand — drowned landscapes, site potential, core targets" },
    { name: "description", content: "Reconstruct drowned shelf landscapes at chosen ages, score site potential, validate it and plan cores." },
  ];
}

export async function loader({ request }: Route.LoaderArgs) {
  const identity = await getIdentity(request);
  if (!identity) return { user: null, projects: [] };
  const { user } = identity;
  return { user: { name: user.name, email: user.email, mayCreateProjects: user.mayCreateProjects }, projects: await listProjectsForUser(user.id) };
}

export default function Home({ loaderData }: Route.ComponentProps) {
  const { user, projects: list } = loaderData;
  return (
    <div className="flex min-h-screen flex-col">
      <TopBar user={user} />
      <ShelfProfile />
      <main className="mx-auto w-full max-w-5xl flex-1 px-6 py-8">
        {!user ? (
          <section className="max-w-2xl">
            <h1 className="text-3xl font-semibold tracking-tight">Where might the drowned land still hold its past?</h1>
            <p className="mt-3 text-sediment-800">
              Lowstand reconstructs a continental shelf at the ages you choose — shorelines, lakes, rivers — scores every cell for
              the potential of surviving prehistoric sites, checks that score against known sites and cores, ranks core targets
              and records reviews.
            </p>
            <Link to="/login" className="mt-6 inline-block rounded-sm bg-deep-800 px-4 py-2 text-sand-50 hover:bg-deep-700">
              Sign in
            </Link>
            <p className="mt-2 text-xs text-sediment-600">Accounts are by invitation from a project lead.</p>
          </section>
        ) : (
          <section>
            <div className="flex items-baseline justify-between">
              <h1 className="text-2xl font-semibold">Projects</h1>
              {user.mayCreateProjects ? (
                <Link to="/projects/new" className="rounded-sm bg-deep-800 px-3 py-1.5 text-sm text-sand-50 hover:bg-deep-700">
                  New project
                </Link>
              ) : null}
            </div>
            {list.length === 0 ? (
              <p className="mt-4 text-sediment-600">
                You are not a member of any project yet. A project lead can invite you{user.mayCreateProjects ? ", or create a project and upload a bathymetry grid to begin" : ""}.
              </p>
            ) : (
              <ul className="mt-4 grid gap-4 sm:grid-cols-2" aria-label="Projects">
                {list.map((p) => (
                  <li key={p.id} className="rounded-md border border-sand-200 bg-white shadow-sm hover:border-sand-400">
                    <Link to={`/projects/${p.id}`} className="block p-4">
                      <div className="flex items-baseline justify-between gap-2">
                        <h2 className="text-lg font-semibold">{p.name}</h2>
                        {p.isDemo ? <span className="rounded-sm bg-sand-100 px-1.5 py-0.5 text-xs text-sand-700">demo · invented</span> : null}
                      </div>
                      <p className="mt-1 line-clamp-3 text-sm text-sediment-600">{p.summary}</p>
                      <p className="mt-2 text-xs text-sediment-400 tabular-nums">
                        EPSG:{p.crsEpsg} · you are {ROLE_LABELS[p.role].toLowerCase()}
                      </p>
                    </Link>
                  </li>
                ))}
              </ul>
            )}
          </section>
        )}
      </main>
      <footer className="mx-auto w-full max-w-5xl px-6 pb-8">
        <Cautions compact />
      </footer>
    </div>
  );
}

/** A small decorative shelf profile under the top bar: sea level cutting a drowned valley. */
function ShelfProfile() {
  return (
    <svg viewBox="0 0 600 40" preserveAspectRatio="none" className="block h-8 w-full" aria-hidden="true">
      <rect width="600" height="40" fill="var(--color-deep-900)" />
      <path d="M0 14 H600 V40 H0Z" fill="var(--color-deep-700)" />
      <path d="M0 30 C60 28 90 20 140 24 S210 36 250 33 S320 18 380 22 S470 34 520 30 S580 26 600 27 V40 H0Z" fill="var(--color-sand-300)" />
      <path d="M0 14 H600" stroke="var(--color-ember-500)" strokeWidth="1.5" />
    </svg>
  );
}
