// Your account: name, job e-mails, personal API tokens.
import { formatUtc } from "~/format";
import { Form, useActionData } from "react-router";
import { z } from "zod";
import { requireIdentity } from "~/auth.server";
import { accountSettings, issueApiToken, listApiTokens, revokeApiToken, updateAccount } from "~/accounts.server";
import { UserError } from "~/errors";
import { formAction, parseForm } from "~/route-helpers.server";
import { personName, tokenName } from "~/validation";
import { TopBar } from "~/components/TopBar";
import { Field, FormProblemNote, IntentButton, PrimaryButton } from "~/components/forms/Field";
import type { Route } from "./+types/account";

export const meta = () => [{ title: "Your account · Lowstand" }];

export async function loader({ request }: Route.LoaderArgs) {
  const { user } = await requireIdentity(request);
  const tokens = (await listApiTokens(user.id)).map((t) => ({ ...t, createdAt: t.createdAt.toISOString(), lastUsedAt: t.lastUsedAt?.toISOString() ?? null }));
  return { user: { name: user.name, email: user.email }, settings: await accountSettings(user.id), tokens };
}

export async function action({ request, context }: Route.ActionArgs) {
  const { user } = await requireIdentity(request);
  const form = await request.formData();
  const meta = { clientAddress: context?.clientAddress };
  return formAction(async () => {
    switch (String(form.get("intent") ?? "")) {
      case "profile": {
        const f = parseForm(z.object({ name: personName }), form);
        await updateAccount(user, { name: f.name, jobEmails: form.get("jobEmails") === "on" });
        return { ok: "Saved." as string, newToken: null as string | null };
      }
      case "create-token": {
        const f = parseForm(z.object({ name: tokenName }), form);
        const t = await issueApiToken(user, f.name, meta);
        return { ok: "Token created. Copy it now: it is shown only this once.", newToken: t.token };
      }
      case "revoke-token": {
        const f = parseForm(z.object({ tokenId: z.coerce.number().int().positive() }), form);
        await revokeApiToken(user, f.tokenId, meta);
        return { ok: "Token revoked.", newToken: null };
      }
      default:
        throw new UserError(400, "unknown_intent", "Choose what to do: profile, create-token or revoke-token.");
    }
  });
}

export default function Account({ loaderData }: Route.ComponentProps) {
  const { user, settings, tokens } = loaderData;
  const result = useActionData<typeof action>();
  const problem = result && "error" in result ? result : null;
  const ok = result && "ok" in result ? result : null;
  return (
    <div className="min-h-screen">
      <TopBar user={user} />
      <main className="mx-auto max-w-3xl space-y-8 px-6 py-8">
        <h1 className="text-2xl font-semibold">Your account</h1>
        <FormProblemNote message={problem?.error} />
        {ok ? (
          <div role="status" className="rounded-sm border-l-4 border-deep-500 bg-sea-200/40 px-3 py-2 text-sm">
            <p>{ok.ok}</p>
            {ok.newToken ? <code className="mt-1 block break-all rounded-sm bg-white px-2 py-1 font-mono text-xs" data-testid="new-token">{ok.newToken}</code> : null}
          </div>
        ) : null}
        <Form method="post" className="max-w-md space-y-3">
          <input type="hidden" name="intent" value="profile" />
          <p className="text-sm text-sediment-600">Signed in as {settings.email}</p>
          <Field label="Name" name="name" defaultValue={settings.name} required maxLength={120} />
          <label className="flex items-center gap-2 text-sm">
            <input type="checkbox" name="jobEmails" defaultChecked={settings.jobEmails} /> E-mail me when a job I started ends
          </label>
          <PrimaryButton type="submit">Save</PrimaryButton>
        </Form>
        <section>
          <h2 className="text-lg font-semibold">Personal API tokens</h2>
          <p className="text-sm text-sediment-600">
            For scripts: send <code>Authorization: Bearer &lt;token&gt;</code> to the JSON API under <code>/api/</code>. A token acts with your roles.
          </p>
          <ul className="mt-3 space-y-1 text-sm">
            {tokens.map((t) => (
              <li key={t.id} className="flex items-center justify-between gap-2 border-b border-sand-100 py-1">
                <span>
                  <strong>{t.name}</strong> <code className="text-xs">{t.prefix}…</code>{" "}
                  <span className="text-xs text-sediment-600">
                    created {t.createdAt.slice(0, 10)} · {t.lastUsedAt ? `last used ${formatUtc(t.lastUsedAt)}` : "never used"}
                  </span>
                </span>
                <IntentButton intent="revoke-token" fields={{ tokenId: t.id }}>
                  Revoke
                </IntentButton>
              </li>
            ))}
          </ul>
          <Form method="post" className="mt-3 flex items-end gap-2">
            <input type="hidden" name="intent" value="create-token" />
            <div className="flex-1">
              <Field label="New token's name" name="name" required maxLength={80} placeholder="e.g. survey laptop import script" />
            </div>
            <PrimaryButton type="submit">Create token</PrimaryButton>
          </Form>
        </section>
      </main>
    </div>
  );
}
