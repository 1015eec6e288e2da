// The project's reviews: the history (open and signed, newest first) and, for reviewers and owners,
// the form that opens a review on a frozen snapshot of a published scoring or model.
import { Form, Link, redirect, useActionData, useNavigation } from "react-router";
import { useState } from "react";
import { requireProjectAccess } from "~/permissions.server";
import { listReviews, openReview, reviewCandidates, reviewRequest } from "~/reviews.server";
import { formAction, parseForm } from "~/route-helpers.server";
import { can } from "~/permissions";
import { formatUtc } from "~/format";
import { FormProblemNote, PrimaryButton } from "~/components/forms/Field";
import { DecisionMark } from "~/components/review/DecisionMark";
import { z } from "zod";
import type { Route } from "./+types/project-reviews";

export const meta = () => [{ title: "Reviews · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const mayOpen = can(role, "reviews.sign");
  const candidates = mayOpen ? await reviewCandidates(project.id) : { scorings: [], models: [], uncertaintyRuns: [] };
  return { projectId: project.id, mayOpen, reviews: await listReviews(project.id), candidates: { ...candidates, models: can(role, "models.read") ? candidates.models : [] } };
}

const optionalId = z.preprocess((v) => (v === "" || v === undefined || v === null ? undefined : Number(v)), z.number().int().positive().optional());

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "reviews.sign");
  const form = await request.formData();
  return formAction(async () => {
    const subject = String(form.get("subject") ?? "");
    const [kind, id] = subject.split(":");
    const fields = parseForm(z.object({ title: z.string(), uncertaintyRunId: optionalId }).passthrough(), form);
    const req = parseForm(reviewRequest, {
      title: fields.title,
      ...(kind === "scoring" ? { scoringId: Number(id) } : kind === "model" ? { modelId: Number(id) } : {}),
      ...(fields.uncertaintyRunId !== undefined ? { uncertaintyRunId: fields.uncertaintyRunId } : {}),
    });
    const r = await openReview(project.id, { id: identity.user.id, name: identity.user.name }, req, { clientAddress: context?.clientAddress });
    throw redirect(`/projects/${project.id}/reviews/${r.id}`);
  });
}

export default function ProjectReviews({ loaderData }: Route.ComponentProps) {
  const { projectId, mayOpen, reviews, candidates } = loaderData;
  const problem = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  const p = problem && "error" in problem ? problem : null;
  const [subject, setSubject] = useState(candidates.scorings[0] ? `scoring:${candidates.scorings[0].id}` : candidates.models[0] ? `model:${candidates.models[0].id}` : "");
  const nothing = candidates.scorings.length === 0 && candidates.models.length === 0;
  return (
    <div className="max-w-5xl space-y-6">
      <header>
        <h1 className="text-2xl font-semibold">Reviews</h1>
        <p className="mt-1 max-w-3xl text-sm text-sediment-600">
          A review freezes what it looks at — the reconstruction, the weight-set version or model, the classification, an uncertainty run and the checksums of their files — under one
          hash, gathers the team's comments, and ends in a decision the reviewer signs with their password. Nothing a review refers to can be deleted.
        </p>
      </header>
      <section aria-labelledby="history">
        <h2 id="history" className="font-semibold">
          History
        </h2>
        {reviews.length === 0 ? (
          <p className="mt-1 text-sm text-sediment-600">No reviews yet.{mayOpen ? " Open one below on a published scoring." : " A reviewer opens one; it appears here."}</p>
        ) : (
          <table className="mt-2 w-full text-sm" data-testid="review-history">
            <thead className="border-b border-sand-300 text-left text-xs uppercase tracking-wide text-sediment-600">
              <tr>
                <th className="py-1 pr-4">Review</th>
                <th className="py-1 pr-4">Looks at</th>
                <th className="py-1 pr-4">Decision</th>
                <th className="py-1 pr-4">Comments</th>
                <th className="py-1">Opened (UTC)</th>
              </tr>
            </thead>
            <tbody>
              {reviews.map((r) => (
                <tr key={r.id} className="border-b border-sand-100" data-review-id={r.id} data-status={r.status}>
                  <td className="py-1.5 pr-4">
                    <Link className="font-medium text-deep-800 underline" to={`/projects/${projectId}/reviews/${r.id}`}>
                      {r.title}
                    </Link>
                    <div className="font-mono text-[11px] text-sediment-600" title="snapshot hash">
                      {r.snapshotHash.slice(0, 16)}…
                    </div>
                  </td>
                  <td className="py-1.5 pr-4">
                    {r.subject}
                    {r.target ? ` · ${r.target}` : ""}
                    <div className="text-xs text-sediment-600">{r.reconstruction}</div>
                  </td>
                  <td className="py-1.5 pr-4">
                    <DecisionMark decision={r.decision} />
                    {r.signedName ? <div className="text-xs text-sediment-600">signed by {r.signedName}</div> : null}
                  </td>
                  <td className="py-1.5 pr-4 tabular-nums">{r.comments}</td>
                  <td className="py-1.5 text-xs tabular-nums">
                    {formatUtc(r.createdAt)} {r.openedBy ? `by ${r.openedBy}` : ""}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
      {mayOpen ? (
        <Form method="post" className="grid max-w-4xl gap-4 rounded-md border border-sand-200 bg-white p-4 md:grid-cols-2" aria-labelledby="open-review">
          <h2 id="open-review" className="font-semibold md:col-span-2">
            Open a review
          </h2>
          <div className="md:col-span-2">
            <FormProblemNote message={p?.error} />
          </div>
          {nothing ? (
            <p className="text-sm text-sediment-600 md:col-span-2">Nothing is published to review yet: an analyst scores a weight-set version on a published reconstruction first (Weights page).</p>
          ) : null}
          <label className="text-sm md:col-span-2">
            <span className="block font-medium">Title</span>
            <input name="title" required maxLength={160} placeholder="e.g. Block C turbine array, pre-consent" className="mt-1 block w-full rounded-sm border border-sand-300 px-2 py-1.5" />
          </label>
          <label className="text-sm">
            <span className="block font-medium">What is reviewed</span>
            <select name="subject" value={subject} onChange={(e) => setSubject(e.target.value)} className="mt-1 block w-full rounded-sm border border-sand-300 bg-white px-2 py-1.5">
              {candidates.scorings.length ? (
                <optgroup label="Published scorings (weight-set version on a reconstruction)">
                  {candidates.scorings.map((s) => (
                    <option key={s.id} value={`scoring:${s.id}`}>
                      {s.label}
                    </option>
                  ))}
                </optgroup>
              ) : null}
              {candidates.models.length ? (
                <optgroup label="Published models">
                  {candidates.models.map((m) => (
                    <option key={m.id} value={`model:${m.id}`}>
                      {m.label}
                    </option>
                  ))}
                </optgroup>
              ) : null}
            </select>
          </label>
          <label className="text-sm">
            <span className="block font-medium">Uncertainty run (optional)</span>
            <select name="uncertaintyRunId" defaultValue="" className="mt-1 block w-full rounded-sm border border-sand-300 bg-white px-2 py-1.5">
              <option value="">none</option>
              {candidates.uncertaintyRuns.map((u) => (
                <option key={u.id} value={u.id}>
                  {u.label}
                </option>
              ))}
            </select>
          </label>
          <div className="md:col-span-2">
            <PrimaryButton type="submit" disabled={busy || nothing}>
              {busy ? "Freezing the snapshot…" : "Open the review"}
            </PrimaryButton>
          </div>
        </Form>
      ) : null}
    </div>
  );
}
