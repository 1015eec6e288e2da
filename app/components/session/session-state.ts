// What a weighing session looks like to its page, and how each numbered event changes it. Shared by
// the server (which builds the snapshot and writes the events) and the browser (which applies the
// events the live stream delivers). Applying an event twice, or one the snapshot already holds,
// changes nothing: the stream and the snapshot may overlap.
import type { WeightSetContent } from "~/scoring/weight-set";
import type { FactorId } from "~/scoring/factors";
import type { Role } from "~/permissions";

export interface Person {
  id: number;
  name: string;
}

export interface SessionMember {
  userId: number;
  name: string;
  role: Role;
}

export interface ProposalView {
  userId: number;
  name: string;
  content: WeightSetContent;
  revision: number;
  updatedAt: string;
}

export interface CommentView {
  id: number;
  userId: number | null;
  name: string;
  factor: FactorId | null;
  body: string;
  createdAt: string;
}

export interface OutcomeView {
  source: { kind: "group" } | { kind: "proposal"; userId: number; name: string };
  weightSetId: number;
  weightSetName: string;
  versionId: number;
  version: number;
  adopted: boolean;
  rationale: string;
}

export interface SessionView {
  id: number;
  projectId: number;
  title: string;
  method: "direct" | "ahp";
  ahpFactors: FactorId[];
  baseContent: WeightSetContent;
  /** where the base came from, in words ("“Coastal” version 3", "the catalogue's starting weights") */
  baseFrom: string;
  status: "open" | "closed";
  startedBy: Person | null;
  startedAt: string;
  closedBy: Person | null;
  closedAt: string | null;
  finalContent: WeightSetContent | null;
  outcome: OutcomeView | null;
}

export interface SessionSnapshot {
  session: SessionView;
  proposals: ProposalView[];
  comments: CommentView[];
  /** members with a live connection now */
  present: number[];
  /** the project's members (names and roles, for presence and labels) */
  members: SessionMember[];
  /** the number of the newest event this snapshot includes */
  lastSeq: number;
}

export type SessionEventKind = "session.started" | "proposal.updated" | "comment.added" | "presence" | "session.closed";

/** One event as the stream sends it (the SSE id is `seq`). */
export interface SessionEvent {
  seq: number;
  kind: SessionEventKind;
  userId: number | null;
  at: string;
  data: Record<string, unknown>;
}

export interface ProposalUpdated {
  userId: number;
  name: string;
  content: WeightSetContent;
  revision: number;
  updatedAt: string;
}
export interface PresenceChanged {
  userId: number;
  name: string;
  present: boolean;
}
export interface SessionClosed {
  closedBy: Person;
  closedAt: string;
  finalContent: WeightSetContent | null;
  outcome: OutcomeView | null;
}

/** The snapshot after `ev` (a new object; `state` is not changed). Events at or before `lastSeq` are ignored. */
export function applyEvent(state: SessionSnapshot, ev: SessionEvent): SessionSnapshot {
  if (ev.seq <= state.lastSeq) return state;
  const next: SessionSnapshot = { ...state, lastSeq: ev.seq };
  switch (ev.kind) {
    case "proposal.updated": {
      const p = ev.data as unknown as ProposalUpdated;
      const others = state.proposals.filter((x) => x.userId !== p.userId);
      next.proposals = [...others, { userId: p.userId, name: p.name, content: p.content, revision: p.revision, updatedAt: p.updatedAt }].sort((a, b) => a.name.localeCompare(b.name) || a.userId - b.userId);
      break;
    }
    case "comment.added": {
      const c = ev.data as unknown as CommentView;
      if (!state.comments.some((x) => x.id === c.id)) next.comments = [...state.comments, c];
      break;
    }
    case "presence": {
      const p = ev.data as unknown as PresenceChanged;
      const without = state.present.filter((id) => id !== p.userId);
      next.present = p.present ? [...without, p.userId] : without;
      if (!state.members.some((m) => m.userId === p.userId)) next.members = [...state.members, { userId: p.userId, name: p.name, role: "viewer" }];
      break;
    }
    case "session.closed": {
      const c = ev.data as unknown as SessionClosed;
      next.session = { ...state.session, status: "closed", closedBy: c.closedBy, closedAt: c.closedAt, finalContent: c.finalContent, outcome: c.outcome };
      next.present = [];
      break;
    }
    default:
      break;
  }
  return next;
}
