// Sign-in: POST /login with form fields `email` and `password`.
import { Form, Link, data, redirect, useActionData, useNavigation, useSearchParams } from "react-router";
import { authenticator, getIdentity, normaliseEmail, readSessionId, revokeSession, SignInRefused, startSession } from "~/auth.server";
import { recordAudit } from "~/audit.server";
import { db } from "~/db.server";
import { assertSameOrigin, hashToken } from "~/security.server";
import { recordSignInAttempt, signInWaitSeconds } from "~/throttle.server";
import { AuthCard } from "~/components/AuthCard";
import { Field, FormProblemNote, PrimaryButton } from "~/components/forms/Field";
import type { Route } from "./+types/login";

export const meta = () => [{ title: "Sign in · Lowstand" }];

/** Only same-site paths are followed after sign-in (never another host). */
function safeNext(next: string | null): string {
  return next && next.startsWith("/") && !next.startsWith("//") && !next.startsWith("/\\") ? next : "/";
}

export async function loader({ request }: Route.LoaderArgs) {
  const identity = await getIdentity(request).catch(() => null);
  if (identity) throw redirect(safeNext(new URL(request.url).searchParams.get("next")));
  return null;
}

export async function action({ request, context }: Route.ActionArgs) {
  assertSameOrigin(request);
  const form = await request.clone().formData();
  const emailKey = normaliseEmail(String(form.get("email") ?? "")).slice(0, 320);
  const clientAddress = context?.clientAddress ?? "";
  const wait = await signInWaitSeconds(emailKey, clientAddress);
  if (wait > 0) {
    return data(
      { error: `Too many sign-in attempts. Wait ${wait} second${wait === 1 ? "" : "s"}, then try again.` },
      { status: 429, headers: { "Retry-After": String(wait) } },
    );
  }
  let user;
  try {
    user = await authenticator.authenticate("form", request);
  } catch (e) {
    if (e instanceof SignInRefused) {
      await recordSignInAttempt(emailKey, clientAddress, false);
      return data({ error: e.message }, { status: 400 });
    }
    throw e;
  }
  await recordSignInAttempt(emailKey, clientAddress, true);
  // A new session id at every sign-in; any session this browser held before ends now.
  const previous = readSessionId(request);
  if (previous) await revokeSession(hashToken(previous));
  const cookie = await startSession(user.id, { clientAddress, userAgent: request.headers.get("User-Agent") ?? "" });
  await recordAudit(db(), { actorUserId: user.id, action: "signed_in", clientAddress });
  return redirect(safeNext(String(form.get("next") ?? "") || null), { headers: { "Set-Cookie": cookie } });
}

export default function Login() {
  const problem = useActionData<typeof action>();
  const [params] = useSearchParams();
  const busy = useNavigation().state !== "idle";
  return (
    <AuthCard title="Sign in">
      <Form method="post" className="space-y-4">
        <input type="hidden" name="next" value={params.get("next") ?? ""} />
        <FormProblemNote message={problem?.error} />
        <Field label="E-mail" name="email" type="email" autoComplete="username" required autoFocus />
        <Field label="Password" name="password" type="password" autoComplete="current-password" required />
        <div className="flex items-center justify-between">
          <PrimaryButton type="submit" disabled={busy}>
            {busy ? "Signing in…" : "Sign in"}
          </PrimaryButton>
          <Link to="/forgot-password" className="text-sm text-deep-700 underline">
            Forgotten password
          </Link>
        </div>
        <p className="text-xs text-sediment-600">There is no open sign-up: a project lead invites you by e-mail.</p>
      </Form>
    </AuthCard>
  );
}
