// The e-mail to whoever started a job, when it ends: queued in the same transaction as the run's
// final state, so the mail goes out if and only if the end is recorded. Opt-out: users.job_emails.
import { eq } from "drizzle-orm";
import type { Db } from "../app/db.server";
import { projects, users } from "../app/db/schema";
import { queueMail } from "../app/mail.server";
import { absoluteUrl } from "../app/security.server";

export type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];

export const CANCELLED_MESSAGE = "Cancelled on request.";

export type EndState = "succeeded" | "failed" | "cancelled";

/** What people call each kind, in e-mails and on pages. */
export const KIND_LABELS: Record<string, string> = {
  reconstruction: "reconstruction",
  "test.sleep": "test job",
};

export function kindLabel(kind: string): string {
  return KIND_LABELS[kind] ?? kind;
}

/** The run's page, which the lead builds at /projects/:projectId/jobs/:runId. */
export function jobRunPath(projectId: number | null, runId: string): string {
  return projectId === null ? `/jobs/${runId}` : `/projects/${projectId}/jobs/${runId}`;
}

export interface EndedRun {
  id: string;
  kind: string;
  projectId: number | null;
  startedBy: number | null;
  createdAt: Date;
}

/**
 * Queues the job-ended e-mail to the run's starter inside `tx`, unless they have none, turned the
 * e-mails off, or the run was started by the system. Returns whether a message was queued.
 */
export async function queueJobEndedMail(tx: Tx, run: EndedRun, state: EndState, message: string): Promise<boolean> {
  if (run.startedBy === null) return false;
  const [user] = await tx.select({ email: users.email, name: users.name, jobEmails: users.jobEmails }).from(users).where(eq(users.id, run.startedBy));
  if (!user || !user.jobEmails) return false;
  let projectName = "";
  if (run.projectId !== null) {
    const [p] = await tx.select({ name: projects.name }).from(projects).where(eq(projects.id, run.projectId));
    projectName = p?.name ?? "";
  }
  const label = kindLabel(run.kind);
  const where = projectName ? ` in “${projectName}”` : "";
  const started = run.createdAt.toISOString().slice(0, 16).replace("T", " ");
  const subject =
    state === "succeeded"
      ? `Your ${label}${where} has finished`
      : state === "cancelled"
        ? `Your ${label}${where} was cancelled`
        : `Your ${label}${where} failed`;
  const outcome =
    state === "succeeded"
      ? "has finished."
      : state === "cancelled"
        ? "was cancelled before it finished; nothing it had half-made is shown."
        : "stopped without a result.";
  const lines = [
    `Hello ${user.name},`,
    "",
    `The ${label} you started${where} on ${started} UTC ${outcome}`,
  ];
  if (message && state !== "succeeded") lines.push("", message);
  lines.push(
    "",
    `Open it here:\n${absoluteUrl(jobRunPath(run.projectId, run.id))}`,
    "",
    "You get this e-mail because you started the job. You can turn these e-mails off on your account page.",
    "",
  );
  await queueMail(tx, { to: user.email, subject: `Lowstand: ${subject}`, text: lines.join("\n") });
  return true;
}
