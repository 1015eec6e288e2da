// One review: what it froze (with the snapshot hash, checked), the discussion in threads, and for
// reviewers the decision they sign by re-entering their password. A decided review is read-only.
import { Form, Link, useActionData, useNavigation } from "react-router";
import { useState } from "react";
import { requireProjectAccess } from "~/permissions.server";
import { addReviewComment, commentRequest, decideReview, decisionRequest, getReviewRow, mayComment, reviewView } from "~/reviews.server";
import { formAction, parseForm } from "~/route-helpers.server";
import { refusal } from "~/security.server";
import { can, ROLE_LABELS } from "~/permissions";
import { formatUtc } from "~/format";
import { FormProblemNote, PrimaryButton, QuietButton } from "~/components/forms/Field";
import { DecisionMark } from "~/components/review/DecisionMark";
import { SnapshotTable } from "~/components/review/SnapshotTable";
import { CommentThread } from "~/components/review/CommentThread";
import { Cautions } from "~/components/Cautions";
import type { Route } from "./+types/project-review";

export const meta = ({ data }: Route.MetaArgs) => [{ title: `${data?.review.title ?? "Review"} · Lowstand` }];

async function reviewOf(request: Request, projectId: number, reviewIdParam: string | undefined) {
  const row = reviewIdParam && /^\d{1,9}$/.test(reviewIdParam) ? await getReviewRow(Number(reviewIdParam)) : null;
  if (!row || row.projectId !== projectId) throw refusal(request, 404, "no_such_review", "There is no such review in this project.");
  return row;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const row = await reviewOf(request, project.id, params.reviewId);
  return { projectId: project.id, review: await reviewView(row), mayComment: mayComment(role), maySign: can(role, "reviews.sign") };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  const { project, identity, role } = await requireProjectAccess(request, params.projectId, intent === "decide" ? "reviews.sign" : "project.read");
  const row = await reviewOf(request, project.id, params.reviewId);
  if (intent === "decide") {
    return formAction(async () => {
      const req = parseForm(decisionRequest, {
        decision: String(form.get("decision") ?? ""),
        conditions: form
          .getAll("conditions")
          .map((c) => String(c).trim())
          .filter((c) => c !== ""),
        note: String(form.get("note") ?? ""),
        password: String(form.get("password") ?? ""),
      });
      await decideReview(row, identity.user, req, { clientAddress: context?.clientAddress });
      return { ok: "Signed." };
    });
  }
  if (!mayComment(role)) throw refusal(request, 403, "role_may_not", `As ${ROLE_LABELS[role].toLowerCase()} you may read the review but not comment. Ask a lead of the project.`);
  return formAction(async () => {
    const parent = String(form.get("parentId") ?? "");
    const req = parseForm(commentRequest, { body: String(form.get("body") ?? ""), ...(parent ? { parentId: Number(parent) } : {}) });
    await addReviewComment(row, identity.user, req, { clientAddress: context?.clientAddress });
    return { ok: "Comment added." };
  });
}

export default function ProjectReview({ loaderData }: Route.ComponentProps) {
  const { projectId, review, mayComment: maySay, maySign } = loaderData;
  const outcome = useActionData<typeof action>();
  const problem = outcome && "error" in outcome ? outcome : null;
  const decisionProblem = problem && /^(password|conditions|note|decision)/.test(problem.field ?? "") ? problem.error : null;
  const commentProblem = problem && !decisionProblem ? problem.error : null;
  const open = review.status === "open";
  return (
    <div className="max-w-5xl space-y-6" data-testid="review" data-status={review.status}>
      <header className="flex flex-wrap items-start justify-between gap-4">
        <div>
          <p className="text-sm">
            <Link to={`/projects/${projectId}/reviews`} className="text-deep-700 underline">
              Reviews
            </Link>
          </p>
          <h1 className="text-2xl font-semibold">{review.title}</h1>
          <p className="mt-1 text-sm text-sediment-600">
            Opened {formatUtc(review.createdAt)} UTC{review.openedBy ? ` by ${review.openedBy}` : ""} · <DecisionMark decision={review.decision} />
          </p>
        </div>
        <Link to={`/projects/${projectId}/reviews/${review.id}/report`} className="rounded-sm border border-deep-700 px-3 py-1.5 text-sm font-medium text-deep-800 hover:bg-sand-100">
          Printable report
        </Link>
      </header>

      <section aria-labelledby="snapshot">
        <h2 id="snapshot" className="font-semibold">
          Frozen snapshot
        </h2>
        <p className="mt-1 font-mono text-xs break-all" data-testid="snapshot-hash">
          {review.snapshotHash}
        </p>
        <p className={`text-xs ${review.snapshotVerified ? "text-sediment-600" : "font-semibold text-caution-800"}`}>
          {review.snapshotVerified ? "The stored snapshot hashes to this value (SHA-256 of its canonical JSON)." : "The stored snapshot no longer hashes to this value: it has been altered outside the product."}
        </p>
        <SnapshotTable snapshot={review.snapshot} />
      </section>

      {review.decision ? <SignedDecision review={review} /> : null}

      <section aria-labelledby="discussion">
        <h2 id="discussion" className="font-semibold">
          Discussion
        </h2>
        <FormProblemNote message={commentProblem} />
        <CommentThread comments={review.comments} mayReply={maySay && open} />
        {maySay && open ? (
          <Form method="post" className="mt-3 space-y-2" aria-label="New comment">
            <input type="hidden" name="intent" value="comment" />
            <textarea name="body" required maxLength={4000} rows={3} placeholder="Ask, object, or note what should be checked…" className="block w-full rounded-sm border border-sand-300 px-2 py-1.5 text-sm" aria-label="Comment" />
            <QuietButton type="submit">Add the comment</QuietButton>
          </Form>
        ) : (
          <p className="mt-2 text-xs text-sediment-600">{open ? "Viewers read the discussion; reviewers, leads and analysts take part." : "The review is decided: the discussion is closed."}</p>
        )}
      </section>

      {maySign && open ? <DecisionForm problem={decisionProblem} /> : null}
      <Cautions compact />
    </div>
  );
}

function SignedDecision({ review }: { review: Route.ComponentProps["loaderData"]["review"] }) {
  return (
    <section aria-labelledby="decision" className="rounded-md border border-sand-300 bg-white p-4" data-testid="signed-decision">
      <h2 id="decision" className="font-semibold">
        Decision: {review.decisionWords}
      </h2>
      {review.conditions.length ? (
        <ol className="mt-2 list-decimal space-y-1 pl-6 text-sm">
          {review.conditions.map((c, i) => (
            <li key={i}>{c}</li>
          ))}
        </ol>
      ) : null}
      {review.decisionNote ? <p className="mt-2 whitespace-pre-wrap text-sm">{review.decisionNote}</p> : null}
      <p className="mt-3 text-xs text-sediment-700">
        Signed by <strong>{review.signature?.name}</strong> at {review.signature?.at ? formatUtc(review.signature.at, true) : ""} UTC over snapshot <span className="font-mono">{review.snapshotHash.slice(0, 16)}…</span>
        {review.signature?.digest ? (
          <>
            {" "}
            · signature digest <span className="font-mono">{review.signature.digest.slice(0, 16)}…</span>
          </>
        ) : null}
      </p>
    </section>
  );
}

function DecisionForm({ problem }: { problem: string | null }) {
  const [decision, setDecision] = useState<"accepted" | "accepted_with_conditions" | "changes_requested">("accepted_with_conditions");
  const [conditions, setConditions] = useState<string[]>([""]);
  const busy = useNavigation().state === "submitting";
  return (
    <Form method="post" className="space-y-3 rounded-md border border-sand-300 bg-white p-4" aria-labelledby="sign">
      <input type="hidden" name="intent" value="decide" />
      <h2 id="sign" className="font-semibold">
        Decide and sign
      </h2>
      <FormProblemNote message={problem} />
      <fieldset className="text-sm">
        <legend className="font-medium">Decision</legend>
        <div className="mt-1 flex flex-wrap gap-4">
          {(
            [
              ["accepted", "accepted"],
              ["accepted_with_conditions", "accepted with conditions"],
              ["changes_requested", "changes requested"],
            ] as const
          ).map(([v, words]) => (
            <label key={v} className="flex items-center gap-1.5">
              <input type="radio" name="decision" value={v} checked={decision === v} onChange={() => setDecision(v)} /> {words}
            </label>
          ))}
        </div>
      </fieldset>
      {decision === "accepted_with_conditions" ? (
        <fieldset className="space-y-1 text-sm">
          <legend className="font-medium">Conditions (at least one)</legend>
          {conditions.map((c, i) => (
            <input
              key={i}
              name="conditions"
              value={c}
              onChange={(e) => setConditions(conditions.map((x, k) => (k === i ? e.target.value : x)))}
              aria-label={`Condition ${i + 1}`}
              placeholder="e.g. A watching brief during cable trenching across the palaeochannel"
              className="block w-full rounded-sm border border-sand-300 px-2 py-1.5"
            />
          ))}
          <QuietButton type="button" onClick={() => setConditions([...conditions, ""])}>
            Add a condition
          </QuietButton>
        </fieldset>
      ) : null}
      <label className="block text-sm">
        <span className="block font-medium">Note{decision === "changes_requested" ? " (which changes)" : " (optional)"}</span>
        <textarea name="note" rows={3} maxLength={8000} className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
      </label>
      <label className="block max-w-sm text-sm">
        <span className="block font-medium">Your password, to sign</span>
        <input name="password" type="password" autoComplete="current-password" required className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
      </label>
      <p className="text-xs text-sediment-600">Signing stores your name, the time and the snapshot hash with the decision. A signed review does not change.</p>
      <PrimaryButton type="submit" disabled={busy}>
        {busy ? "Signing…" : "Sign the decision"}
      </PrimaryButton>
    </Form>
  );
}
