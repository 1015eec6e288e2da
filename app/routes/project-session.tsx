// One weighing session: who is here, my proposal, the group result with each member's position per
// factor, the disagreement map, the discussion and (for leads) the outcome. Live: every saved change
// arrives over the session's event stream and is applied without a reload. Closed: the record.
import { useMemo } from "react";
import { Link, useRevalidator } from "react-router";
import { requireSessionAccess, sessionSnapshot } from "~/weighing-sessions.server";
import { mayComment as mayCommentFor } from "~/weighing-sessions.server";
import { listWeightSets } from "~/weight-sets.server";
import { can, ROLE_LABELS } from "~/permissions";
import { factorDef, type FactorId } from "~/scoring/factors";
import { groupResult } from "~/scoring/group-weights";
import { CONSISTENCY_RATIO_LIMIT } from "~/scoring/ahp";
import { formatUtc } from "~/format";
import { useSessionStream } from "~/components/session/useSessionStream";
import { ProposalEditor } from "~/components/session/ProposalEditor";
import { SpreadChart, type SpreadRow } from "~/components/session/SpreadChart";
import { Discussion } from "~/components/session/Discussion";
import { OutcomePanel } from "~/components/session/OutcomePanel";
import type { SessionSnapshot } from "~/components/session/session-state";
import { DisagreementMap } from "~/components/session/DisagreementMap";
import { mapPayload } from "~/map.server";
import { db } from "~/db.server";
import { projects } from "~/db/schema";
import { eq } from "drizzle-orm";
import type { MapData } from "~/components/map/types";
import type { Route } from "./+types/project-session";

export const meta = ({ data }: Route.MetaArgs) => [{ title: `${data?.snapshot.session.title ?? "Weighing session"} · Lowstand` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { session, identity, role } = await requireSessionAccess(request, params.sessionId, "project.read", params.projectId);
  const snapshot = (await sessionSnapshot(session.id))!;
  const mayLead = can(role, "weights.adopt");
  const sets = mayLead && session.status === "open" ? await listWeightSets(session.projectId) : [];
  // the newest published reconstruction, for the disagreement map (what this role may see of the map)
  const [project] = await db().select().from(projects).where(eq(projects.id, session.projectId));
  const map = (await mapPayload(project, { userId: identity.user.id, role }, null)) as unknown as MapData;
  return {
    snapshot,
    me: { id: identity.user.id, name: identity.user.name },
    role,
    mayPropose: can(role, "weights.edit"),
    mayComment: mayCommentFor(role),
    mayLead,
    weightSets: sets.map((s) => ({ id: s.id, name: s.name, currentVersion: s.currentVersion })),
    map: map.reconstruction ? map : null,
  };
}

const pct = (x: number) => `${(x * 100).toFixed(1)} %`;

export default function ProjectSession({ loaderData }: Route.ComponentProps) {
  const { snapshot } = loaderData;
  // A new snapshot (after a role change, say) starts the room afresh.
  return <WeighingRoom key={`${snapshot.session.id}:${loaderData.role}:${snapshot.session.status}`} {...loaderData} />;
}

function WeighingRoom({ snapshot, me, role, mayPropose, mayComment, mayLead, weightSets, map }: Route.ComponentProps["loaderData"]) {
  const revalidator = useRevalidator();
  const { state, live } = useSessionStream(snapshot as SessionSnapshot, () => void revalidator.revalidate());
  const s = state.session;
  const open = s.status === "open";
  const factors = useMemo(() => s.baseContent.factors.map((f) => f.factor), [s.baseContent]);
  const mine = state.proposals.find((p) => p.userId === me.id) ?? null;
  const memberNames = useMemo(() => state.proposals.map((p) => p.name), [state.proposals]);

  const group = useMemo(() => {
    if (!state.proposals.length) return { result: null, problem: "No proposals yet." };
    try {
      return { result: groupResult(s.baseContent, s.method, state.proposals.map((p) => p.content), s.ahpFactors, memberNames), problem: null };
    } catch (e) {
      return { result: null, problem: (e as Error).message };
    }
  }, [state.proposals, s.baseContent, s.method, s.ahpFactors, memberNames]);

  const rows: SpreadRow[] = useMemo(
    () =>
      group.result
        ? factors.map((f, i) => ({
            factor: f,
            label: factorDef(f)?.label ?? f,
            group: group.result!.weight[i],
            members: state.proposals.map((p, k) => ({ name: p.name, weight: group.result!.normalised[k][i] })),
          }))
        : [],
    [group, factors, state.proposals],
  );

  const proposalsForMap = useMemo(() => state.proposals.map((p) => ({ name: p.name, content: p.content })), [state.proposals]);
  const present = new Set(state.present);
  const byId = new Map(state.members.map((m) => [m.userId, m]));
  const tookPart = [...new Set([...state.proposals.map((p) => p.name), ...state.comments.map((c) => c.name)])];

  return (
    <div className="max-w-6xl space-y-6" data-testid="weighing-room" data-live={live} data-last-seq={state.lastSeq} data-status={s.status}>
      <header className="space-y-1">
        <p className="text-xs uppercase tracking-wide text-sediment-600">
          <Link to={`/projects/${s.projectId}/weighing`} className="underline">
            Weighing sessions
          </Link>{" "}
          · {s.method === "ahp" ? "AHP judgements" : "direct weights"}
        </p>
        <h1 className="text-2xl font-semibold">{s.title}</h1>
        <p className="text-sm text-sediment-600">
          Started {formatUtc(s.startedAt)} UTC{s.startedBy ? ` by ${s.startedBy.name}` : ""} from {s.baseFrom}.{" "}
          {open ? (
            <span>
              You are {ROLE_LABELS[role].toLowerCase()}: {mayPropose ? "you propose weights" : mayComment ? "you watch and comment" : "you watch"}.{" "}
              <span className="text-xs" data-testid="live-state">
                {live === "live" ? "● live" : live === "reconnecting" ? "○ reconnecting…" : live === "connecting" ? "○ connecting…" : "○ not live — reload the page"}
              </span>
            </span>
          ) : (
            <span className="font-medium">Closed {s.closedAt ? `${formatUtc(s.closedAt)} UTC` : ""}{s.closedBy ? ` by ${s.closedBy.name}` : ""}: a read-only record.</span>
          )}
        </p>
      </header>

      {open ? (
        <section aria-label="Who is here" className="flex flex-wrap items-center gap-2 text-sm" data-testid="presence">
          <span className="text-xs uppercase tracking-wide text-sediment-600">Here now</span>
          {state.present.length === 0 ? <span className="text-sediment-600">only you, connecting</span> : null}
          {[...present].map((id) => (
            <span key={id} className="rounded-full border border-sand-300 bg-white px-2 py-0.5" data-present-user={byId.get(id)?.name ?? id}>
              ● {byId.get(id)?.name ?? `member ${id}`}
              {byId.get(id) ? <span className="text-xs text-sediment-600"> · {ROLE_LABELS[byId.get(id)!.role].toLowerCase()}</span> : null}
            </span>
          ))}
        </section>
      ) : null}

      {s.outcome || (!open && s.finalContent) ? (
        <section aria-label="Outcome" className="rounded-md border-l-4 border-ember-500 bg-white p-4 text-sm" data-testid="outcome">
          <h2 className="font-semibold">Outcome</h2>
          {s.outcome ? (
            <p>
              {s.outcome.source.kind === "group" ? "The group result" : `${s.outcome.source.name}'s proposal`} became version {s.outcome.version} of “{s.outcome.weightSetName}”
              {s.outcome.adopted ? ", now the project's adopted weight set" : ""}. Rationale: {s.outcome.rationale}
            </p>
          ) : null}
          {s.finalContent ? <FinalWeights content={s.finalContent} /> : null}
        </section>
      ) : !open ? (
        <p className="text-sm">Closed without an outcome.</p>
      ) : null}

      {open && mayPropose ? (
        <section aria-label="My proposal" className="rounded-md border border-sand-200 bg-sand-50 p-4">
          <h2 className="mb-2 font-semibold">My proposal</h2>
          <ProposalEditor sessionId={s.id} method={s.method} ahpFactors={s.ahpFactors} start={mine?.content ?? s.baseContent} hasProposal={!!mine} />
        </section>
      ) : null}

      <section aria-label="Group result" className="space-y-2">
        <h2 className="font-semibold">{open ? "Group result, live" : "Final weights"}</h2>
        <p className="text-xs text-sediment-600">
          {s.method === "ahp"
            ? "Group weights from the element-wise geometric mean of everyone's judgements (Aczél & Saaty 1983), principal eigenvector (Saaty 1980). Curves and preservation come from the session's starting weights."
            : "Group weights: each proposal normalised to 100 %, then the mean per factor. Curves and preservation come from the session's starting weights; adopt one proposal to keep its curves."}
        </p>
        {group.result?.ahp ? (
          <p className={`text-sm ${group.result.ahp.consistencyRatio > CONSISTENCY_RATIO_LIMIT ? "font-medium text-caution-800" : ""}`} data-testid="group-cr">
            Group consistency ratio {group.result.ahp.consistencyRatio.toFixed(3)}
            {group.result.ahp.consistencyRatio > CONSISTENCY_RATIO_LIMIT ? " — above 0.10: the group's judgements contradict each other (Saaty 1980)." : " (0.10 or below is acceptable)."}
          </p>
        ) : null}
        {group.result ? (
          <>
            <SpreadChart rows={rows} memberNames={memberNames} />
            <table className="w-full text-sm" data-testid="weights-table">
              <thead className="border-b border-sand-300 text-left text-xs uppercase tracking-wide text-sediment-600">
                <tr>
                  <th className="py-1 pr-3">Factor</th>
                  {state.proposals.map((p) => (
                    <th key={p.userId} className="py-1 pr-3">
                      {p.name}
                      {group.result!.ahp ? <span className="block font-normal normal-case">CR {group.result!.ahp.members[state.proposals.indexOf(p)].consistencyRatio.toFixed(2)}</span> : null}
                    </th>
                  ))}
                  <th className="py-1 pr-3">Group</th>
                  <th className="py-1">Spread (SD)</th>
                </tr>
              </thead>
              <tbody>
                {rows.map((r, i) => (
                  <tr key={r.factor} className="border-b border-sand-100" data-factor={r.factor}>
                    <td className="py-1 pr-3">{r.label}</td>
                    {r.members.map((m) => (
                      <td key={m.name} className="py-1 pr-3 tabular-nums" data-member={m.name}>
                        {pct(m.weight)}
                      </td>
                    ))}
                    <td className="py-1 pr-3 font-medium tabular-nums" data-group-weight={r.factor}>
                      {pct(r.group)}
                    </td>
                    <td className="py-1 tabular-nums text-sediment-600">{pct(group.result!.sd[i])}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </>
        ) : (
          <p className="text-sm text-sediment-600">{group.problem === "No proposals yet." ? "No proposals yet: the group result appears with the first one." : `No group result: ${group.problem}`}</p>
        )}
      </section>

      <section aria-label="Disagreement map" className="space-y-2">
        <h2 className="font-semibold">Where the proposals disagree</h2>
        {map ? (
          <DisagreementMap map={map} proposals={proposalsForMap} />
        ) : (
          <p className="text-sm text-sediment-600">The map of disagreement needs a published reconstruction of the project.</p>
        )}
      </section>

      <section aria-label="Discussion" className="space-y-2">
        <h2 className="font-semibold">Discussion</h2>
        <Discussion sessionId={s.id} comments={state.comments} factors={factors as FactorId[]} mayComment={mayComment} open={open} />
      </section>

      {open && mayLead ? (
        <section aria-label="Decide" className="rounded-md border border-sand-200 bg-white p-4">
          <h2 className="mb-2 font-semibold">Decide</h2>
          <OutcomePanel sessionId={s.id} proposals={state.proposals} weightSets={weightSets} groupProblem={group.problem} />
        </section>
      ) : null}

      {!open ? (
        <section aria-label="Record" className="text-sm">
          <h2 className="font-semibold">Record</h2>
          <p>
            Took part: {tookPart.length ? tookPart.join(", ") : "nobody proposed or commented"}. {state.proposals.length} proposal{state.proposals.length === 1 ? "" : "s"}, {state.comments.length} remark
            {state.comments.length === 1 ? "" : "s"}, {state.lastSeq} events.
          </p>
        </section>
      ) : null}
    </div>
  );
}

function FinalWeights({ content }: { content: NonNullable<SessionSnapshot["session"]["finalContent"]> }) {
  const total = content.factors.reduce((a, f) => a + f.weight, 0);
  return (
    <table className="mt-2 text-sm" data-testid="final-weights">
      <tbody>
        {content.factors
          .filter((f) => f.weight > 0)
          .map((f) => (
            <tr key={f.factor}>
              <td className="pr-4">{factorDef(f.factor)?.label ?? f.factor}</td>
              <td className="tabular-nums">{pct(f.weight / total)}</td>
            </tr>
          ))}
      </tbody>
    </table>
  );
}
