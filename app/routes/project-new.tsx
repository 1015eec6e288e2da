import { Form, redirect, useActionData } from "react-router";
import { mayNotCreate, requireIdentity } from "~/auth.server";
import { createProject } from "~/projects.server";
import { formAction, parseForm } from "~/route-helpers.server";
import { projectFields } from "~/validation";
import { TopBar } from "~/components/TopBar";
import { Field, FormProblemNote, PrimaryButton } from "~/components/forms/Field";
import type { Route } from "./+types/project-new";

export const meta = () => [{ title: "New project · Lowstand" }];

export async function loader({ request }: Route.LoaderArgs) {
  const { user } = await requireIdentity(request);
  if (!user.mayCreateProjects) throw mayNotCreate(request);
  return { user: { name: user.name, email: user.email } };
}

export async function action({ request, context }: Route.ActionArgs) {
  const { user } = await requireIdentity(request);
  if (!user.mayCreateProjects) throw mayNotCreate(request);
  const form = await request.formData();
  return formAction(async () => {
    const f = parseForm(projectFields, form);
    const project = await createProject(user, f, { clientAddress: context?.clientAddress });
    throw redirect(`/projects/${project.id}`);
  });
}

export default function NewProject({ loaderData }: Route.ComponentProps) {
  const problem = useActionData<typeof action>();
  const p = problem && "error" in problem ? problem : null;
  return (
    <div className="min-h-screen">
      <TopBar user={loaderData.user} />
      <main className="mx-auto max-w-xl px-6 py-8">
        <h1 className="text-2xl font-semibold">New project</h1>
        <Form method="post" className="mt-6 space-y-4">
          <FormProblemNote message={p && !p.field ? p.error : null} />
          <Field label="Name" name="name" required maxLength={120} problem={p?.field === "name" ? p.error : null} />
          <Field label="Summary" name="summary" maxLength={2000} problem={p?.field === "summary" ? p.error : null} />
          <Field
            label="Projected CRS (EPSG code)"
            name="crsEpsg"
            inputMode="numeric"
            required
            hint="A projected CRS in metres, e.g. a UTM zone (32601–32660 north, 32701–32760 south). Every layer is analysed in it."
            problem={p?.field === "crsEpsg" ? p.error : null}
          />
          <PrimaryButton type="submit">Create the project</PrimaryButton>
        </Form>
      </main>
    </div>
  );
}

