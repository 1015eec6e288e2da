import { Form, data, useActionData } from "react-router";
import { requestPasswordReset } from "~/accounts.server";
import { assertSameOrigin } from "~/security.server";
import { AuthCard } from "~/components/AuthCard";
import { Field, FormProblemNote, PrimaryButton } from "~/components/forms/Field";
import { email as emailRule } from "~/validation";
import type { Route } from "./+types/forgot-password";

export const meta = () => [{ title: "Reset your password · Lowstand" }];

export async function action({ request, context }: Route.ActionArgs) {
  assertSameOrigin(request);
  const form = await request.formData();
  const parsed = emailRule.safeParse(form.get("email") ?? "");
  if (!parsed.success) return data({ sent: false, error: parsed.error.issues[0].message }, { status: 422 });
  await requestPasswordReset(parsed.data, { clientAddress: context?.clientAddress });
  return { sent: true, error: null };
}

export default function ForgotPassword() {
  const result = useActionData<typeof action>();
  return (
    <AuthCard title="Reset your password">
      {result?.sent ? (
        <p className="text-sm" role="status">
          If an account has that address, a message with a reset link is on its way. The link works once, within an hour.
        </p>
      ) : (
        <Form method="post" className="space-y-4">
          <FormProblemNote message={result?.error} />
          <Field label="E-mail" name="email" type="email" autoComplete="username" required />
          <PrimaryButton type="submit">Send a reset link</PrimaryButton>
        </Form>
      )}
    </AuthCard>
  );
}
