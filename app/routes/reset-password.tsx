import { Form, Link, data, redirect, useActionData, useLoaderData } from "react-router";
import { resetPassword, resetTokenUsable } from "~/accounts.server";
import { assertSameOrigin } from "~/security.server";
import { formAction, parseForm } from "~/route-helpers.server";
import { AuthCard } from "~/components/AuthCard";
import { Field, FormProblemNote, PrimaryButton } from "~/components/forms/Field";
import { password } from "~/validation";
import { z } from "zod";
import type { Route } from "./+types/reset-password";

export const meta = () => [{ title: "Choose a new password · Lowstand" }];

export async function loader({ params }: Route.LoaderArgs) {
  const usable = await resetTokenUsable(params.token);
  return data({ usable }, { status: usable ? 200 : 410 });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  assertSameOrigin(request);
  const form = await request.formData();
  return formAction(async () => {
    const f = parseForm(z.object({ password }), form);
    await resetPassword(params.token, f.password, { clientAddress: context?.clientAddress });
    throw redirect("/login?reset=1");
  });
}

export default function ResetPassword() {
  const { usable } = useLoaderData<typeof loader>();
  const problem = useActionData<typeof action>();
  return (
    <AuthCard title="Choose a new password">
      {usable ? (
        <Form method="post" className="space-y-4">
          <FormProblemNote message={problem && "error" in problem ? problem.error : null} />
          <Field label="New password" name="password" type="password" autoComplete="new-password" minLength={10} required hint="At least 10 characters." />
          <PrimaryButton type="submit">Set the new password</PrimaryButton>
          <p className="text-xs text-sediment-600">Every signed-in session of this account ends when the password changes.</p>
        </Form>
      ) : (
        <p className="text-sm">
          This reset link is not valid any more: it was used, replaced or has expired. <Link className="underline" to="/forgot-password">Ask for a new one.</Link>
        </p>
      )}
    </AuthCard>
  );
}
