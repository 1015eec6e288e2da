// Where a project stands: one line per stage of the work (evidence → landscape → weights → scoring
// and validation → model → uncertainty → core targets → review), each with its state and the next
// step where nothing is there yet. Read only; every stage respects the role's capabilities, so a
// viewer sees no model and no draft target list (design §8, §9).
import { and, count, eq, ne } from "drizzle-orm";
import { db } from "./db.server";
import { datasets, siteRecords, users } from "./db/schema";
import { can, type Role } from "./permissions";
import { listReconstructions } from "./reconstructions.server";
import { adoptedVersion, listWeightSets } from "./weight-sets.server";
import { listScorings, targetLabel, type ScoringTarget } from "./scorings.server";
import { listModels } from "./models.server";
import { listUncertaintyRuns } from "./uncertainty.server";
import { listTargetLists } from "./target-lists.server";
import { listReviews } from "./reviews.server";
import { listSessions } from "./weighing-sessions.server";

export type StageState = "ready" | "working" | "to-do";

export interface Stage {
  key: string;
  title: string;
  /** path below /projects/:id */
  path: string;
  state: StageState;
  /** what is there, in one sentence */
  summary: string;
  /** what to do next when the stage is to do (null when the role cannot do it) */
  next: string | null;
}

const plural = (n: number, one: string, many = `${one}s`) => `${n.toLocaleString("en")} ${n === 1 ? one : many}`;
const day = (d: Date | string | null | undefined) => (d ? new Date(d).toISOString().slice(0, 10) : "");

/** The stages of a project's work as `role` may see them. O(rows of the project's lists). */
export async function projectStanding(projectId: number, role: Role): Promise<Stage[]> {
  const stages: Stage[] = [];

  // Evidence
  const kinds = await db().select({ kind: datasets.kind, n: count() }).from(datasets).where(eq(datasets.projectId, projectId)).groupBy(datasets.kind);
  const byKind = new Map(kinds.map((k) => [k.kind, Number(k.n)]));
  const nData = kinds.reduce((s, k) => s + Number(k.n), 0);
  // Known sites: a count for roles that see them exactly, leaving out records their community withheld.
  const [{ n: nSites }] = await db()
    .select({ n: count() })
    .from(siteRecords)
    .where(and(eq(siteRecords.projectId, projectId), ne(siteRecords.visibility, "withheld")));
  const siteWords = can(role, "sites.readExact") ? plural(Number(nSites), "known-site record") : "known sites shown generalised";
  const hasBathymetry = (byKind.get("bathymetry") ?? 0) > 0;
  stages.push({
    key: "evidence",
    title: "Evidence",
    path: "data",
    state: hasBathymetry ? "ready" : "to-do",
    summary: nData
      ? `${plural(nData, "dataset")}${hasBathymetry ? "" : ", but no bathymetry grid"}; ${siteWords}; ${plural(byKind.get("cores") ?? 0, "core dataset")}; ${plural(byKind.get("survey_lines") ?? 0, "survey-line dataset")}.`
      : "No datasets yet.",
    next: hasBathymetry ? null : can(role, "data.upload") ? "Upload a bathymetry grid to begin; sub-bottom picks, survey lines and known sites follow." : "An analyst or lead of this project uploads the bathymetry grid to begin.",
  });

  // Landscape
  const recs = await listReconstructions(projectId);
  const published = recs.filter((r) => r.effectiveStatus === "published");
  const runningRecs = recs.filter((r) => r.effectiveStatus === "running");
  const newest = published[0];
  const ages = (newest?.manifest as { agesKa?: number[] } | null)?.agesKa ?? [];
  stages.push({
    key: "landscape",
    title: "Landscape through time",
    path: newest ? `map?reconstruction=${newest.id}` : "reconstructions",
    state: newest ? "ready" : runningRecs.length ? "working" : "to-do",
    summary: newest
      ? `${plural(published.length, "published reconstruction")}; the newest, “${newest.name || `reconstruction ${newest.id}`}”, has ${plural(ages.length, "age")} (${ages.join(", ")} ka).${runningRecs.length ? ` ${plural(runningRecs.length, "more")} running.` : ""}`
      : runningRecs.length
        ? `${plural(runningRecs.length, "reconstruction")} running.`
        : "No reconstruction yet.",
    next: newest || runningRecs.length ? null : hasBathymetry && can(role, "runs.start") ? "Reconstruct the shelf at the ages you need, from the bathymetry and a sea-level curve." : null,
  });

  // Weights
  const adopted = await adoptedVersion(projectId);
  const sets = await listWeightSets(projectId);
  const sessions = (await listSessions(projectId)).filter((s) => s.status === "open");
  let adoptedBy = "";
  if (adopted?.adoption.adoptedBy) {
    const [u] = await db().select({ name: users.name }).from(users).where(eq(users.id, adopted.adoption.adoptedBy));
    adoptedBy = u?.name ?? "";
  }
  stages.push({
    key: "weights",
    title: "Weights",
    path: sessions.length ? `weighing/${sessions[0].id}` : "weights",
    state: adopted ? "ready" : sessions.length ? "working" : "to-do",
    summary:
      (adopted
        ? `Adopted: “${adopted.set.name}” version ${adopted.version.version}${adoptedBy ? `, by ${adoptedBy}` : ""} on ${day(adopted.adoption.adoptedAt)}. ${plural(sets.length, "weight set")} in all.`
        : sets.length
          ? `${plural(sets.length, "weight set")}; none adopted yet.`
          : "No weight set yet.") + (sessions.length ? ` A weighing session is open: “${sessions[0].title}”.` : ""),
    next: adopted ? null : can(role, "weights.adopt") ? "Agree the weights (alone or in a weighing session) and adopt one version for the project." : can(role, "weights.edit") ? "Propose weights; a lead adopts one version for the project." : null,
  });

  // Scoring and validation
  const scored = (await listScorings(projectId)).filter((s) => s.effectiveStatus === "published");
  const latest = scored[0];
  stages.push({
    key: "scoring",
    title: "Potential and validation",
    // nothing scored yet: the adopted set's page is where a scoring starts
    path: latest || !adopted ? "validation" : `weights/${adopted.set.id}`,
    state: latest ? "ready" : "to-do",
    summary: latest
      ? `${plural(scored.length, "published scoring")}; the newest scores “${latest.version.setName}” version ${latest.version.number} at ${targetLabel(latest.target as ScoringTarget)}.`
      : "Nothing scored yet.",
    next: latest ? null : adopted && newest && can(role, "runs.start") ? "Score the adopted weights on the reconstruction and read the validation against the sites." : null,
  });

  // Trained model (never shown below analyst)
  if (can(role, "models.read")) {
    const ms = await listModels(projectId);
    const ok = ms.filter((m) => m.effectiveStatus === "published");
    const refused = ms.filter((m) => m.effectiveStatus === "failed").length;
    stages.push({
      key: "models",
      title: "Trained model",
      path: ok[0] ? `models/${ok[0].id}` : "models",
      state: ok.length ? "ready" : ms.some((m) => m.effectiveStatus === "running") ? "working" : "to-do",
      summary: ok.length ? `${plural(ok.length, "model")} trained${refused ? `; ${refused} refused or failed` : ""}.` : ms.length ? `${plural(ms.length, "model")} asked for, none published yet.` : "No model trained (optional: the weights stand on their own).",
      next: null,
    });
  }

  // Uncertainty
  const us = await listUncertaintyRuns(projectId);
  const usOk = us.filter((u) => u.effectiveStatus === "published");
  stages.push({
    key: "uncertainty",
    title: "Uncertainty",
    path: "uncertainty",
    state: usOk.length ? "ready" : us.some((u) => u.effectiveStatus === "running") ? "working" : "to-do",
    summary: usOk.length ? `${plural(usOk.length, "analysis", "analyses")} published; the newest on ${day(usOk[0].createdAt)}.` : "No uncertainty analysis yet.",
    next: usOk.length ? null : adopted && newest && can(role, "uncertainty.run") ? "Run the Monte Carlo analysis on the adopted weights to see which ground is robustly high." : null,
  });

  // Core targets
  const lists = await listTargetLists(projectId, role);
  const pub = lists.filter((l) => l.status === "published");
  const drafts = lists.length - pub.length;
  const cored = pub.reduce((s, l) => s + l.byStatus.cored + l.byStatus.result, 0);
  const results = pub.reduce((s, l) => s + l.byStatus.result, 0);
  stages.push({
    key: "targets",
    title: "Core targets",
    path: "targets",
    state: pub.length ? "ready" : drafts ? "working" : "to-do",
    summary: lists.length
      ? `${plural(pub.length, "published list")}${drafts ? ` and ${plural(drafts, "draft")}` : ""}; ${plural(cored, "target")} cored, ${plural(results, "result")} recorded.`
      : "No target list yet.",
    next: lists.length ? null : latest && can(role, "runs.start") ? "Make a constrained list of core targets from the scoring, and plan the cruise." : null,
  });

  // Review
  const rs = await listReviews(projectId);
  const open = rs.filter((r) => r.status === "open");
  const decided = rs.find((r) => r.status === "decided");
  stages.push({
    key: "review",
    title: "Review",
    path: "reviews",
    state: decided && !open.length ? "ready" : open.length ? "working" : "to-do",
    summary: rs.length
      ? `${plural(open.length, "open review")}${decided ? `; the latest decision: ${decided.decisionWords ?? decided.decision}, signed by ${decided.signedName} on ${day(decided.signedAt)}` : ""}.`
      : "No review opened.",
    next: rs.length ? null : latest && can(role, "reviews.sign") ? "Open a review on a frozen snapshot of the scoring, and sign a decision." : null,
  });

  return stages;
}
