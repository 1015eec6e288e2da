// Accepting an invitation: /invitations/:token. The link works once.
import { Form, Link, data, redirect, useActionData, useLoaderData } from "react-router";
import { acceptInvitation, viewInvitation } from "~/accounts.server";
import { getIdentity, startSession } from "~/auth.server";
import { UserError } from "~/errors";
import { ROLE_DUTIES, ROLE_LABELS } from "~/permissions";
import { formAction, parseForm } from "~/route-helpers.server";
import { assertSameOrigin } from "~/security.server";
import { AuthCard } from "~/components/AuthCard";
import { Field, FormProblemNote, PrimaryButton } from "~/components/forms/Field";
import { password, personName } from "~/validation";
import { z } from "zod";
import type { Route } from "./+types/invitation";

export const meta = () => [{ title: "Invitation · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const identity = await getIdentity(request).catch(() => null);
  try {
    const inv = await viewInvitation(params.token);
    return { ok: true as const, inv, signedInAs: identity?.user.email ?? null, message: null };
  } catch (e) {
    if (e instanceof UserError) return data({ ok: false as const, inv: null, signedInAs: null, message: e.message }, { status: e.status });
    throw e;
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  assertSameOrigin(request);
  const identity = await getIdentity(request);
  const form = await request.formData();
  return formAction(async () => {
    const newAccount = identity ? undefined : parseForm(z.object({ name: personName, password }), form);
    const result = await acceptInvitation(params.token, { signedIn: identity?.user ?? null, newAccount }, { clientAddress: context?.clientAddress });
    const headers = new Headers();
    if (result.created) {
      headers.append("Set-Cookie", await startSession(result.userId, { clientAddress: context?.clientAddress, userAgent: request.headers.get("User-Agent") ?? "" }));
    }
    throw redirect(`/projects/${result.projectId}`, { headers });
  });
}

export default function Invitation() {
  const { ok, inv, signedInAs, message } = useLoaderData<typeof loader>();
  const problem = useActionData<typeof action>();
  if (!ok || !inv) {
    return (
      <AuthCard title="Invitation">
        <p className="text-sm">{message}</p>
      </AuthCard>
    );
  }
  const here = typeof window === "undefined" ? "" : window.location.pathname;
  return (
    <AuthCard title={`Join ${inv.projectName}`}>
      <p className="text-sm text-sediment-800">
        {inv.inviterName ? `${inv.inviterName} invites` : "You are invited"} <strong>{inv.email}</strong> to join as{" "}
        <strong>{ROLE_LABELS[inv.role].toLowerCase()}</strong>: {ROLE_DUTIES[inv.role]}.
      </p>
      <div className="mt-4 space-y-4">
        <FormProblemNote message={problem && "error" in problem ? problem.error : null} />
        {inv.accountExists ? (
          signedInAs === inv.email ? (
            <Form method="post">
              <PrimaryButton type="submit">Join the project</PrimaryButton>
            </Form>
          ) : (
            <p className="text-sm">
              An account for {inv.email} exists.{" "}
              <Link className="underline" to={`/login?next=${encodeURIComponent(here)}`}>
                Sign in as {inv.email}
              </Link>
              , then open this link again.
            </p>
          )
        ) : signedInAs ? (
          <p className="text-sm">
            You are signed in as {signedInAs}, but this invitation is for {inv.email}. Sign out first to create that account.
          </p>
        ) : (
          <Form method="post" className="space-y-4">
            <Field label="Your name" name="name" autoComplete="name" required maxLength={120} problem={problem && "field" in problem && problem.field === "name" ? problem.error : null} />
            <Field label="Choose a password" name="password" type="password" autoComplete="new-password" minLength={10} required hint="At least 10 characters." />
            <PrimaryButton type="submit">Create my account and join</PrimaryButton>
          </Form>
        )}
      </div>
    </AuthCard>
  );
}
