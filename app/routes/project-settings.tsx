// Project settings: name and summary, and how known sites are generalised for those who may not
// see them exactly (design §9). Owners and leads change them; the change is audited.
import { Form, useActionData } from "react-router";
import { eq } from "drizzle-orm";
import { z } from "zod";
import { requireProjectAccess } from "~/permissions.server";
import { db } from "~/db.server";
import { projects } from "~/db/schema";
import { recordAudit } from "~/audit.server";
import { formAction, parseForm } from "~/route-helpers.server";
import { projectFields } from "~/validation";
import { Field, FormOutcome, PrimaryButton } from "~/components/forms/Field";
import type { Route } from "./+types/project-settings";

export const meta = () => [{ title: "Settings · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "project.edit");
  return { project: { name: project.name, summary: project.summary, crsEpsg: project.crsEpsg, siteGeneralisationM: project.siteGeneralisationM, siteMinCount: project.siteMinCount } };
}

const settingsFields = projectFields.pick({ name: true, summary: true }).extend({
  siteGeneralisationM: z.coerce.number({ error: "Give the generalisation cell size in metres." }).int("Whole metres, please.").min(100, "Cells smaller than 100 m would come close to exact positions.").max(50_000, "Cells larger than 50 km say nothing useful."),
  siteMinCount: z.coerce.number({ error: "Give the smallest count shown." }).int("A whole number of sites.").min(1, "At least 1.").max(50, "At most 50."),
});

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "project.edit");
  const form = await request.formData();
  return formAction(async () => {
    const f = parseForm(settingsFields, form);
    await db().transaction(async (tx) => {
      await tx.update(projects).set(f).where(eq(projects.id, project.id));
      await recordAudit(tx, {
        actorUserId: identity.user.id,
        projectId: project.id,
        action: "project.settings_changed",
        detail: { before: { name: project.name, siteGeneralisationM: project.siteGeneralisationM, siteMinCount: project.siteMinCount }, after: { name: f.name, siteGeneralisationM: f.siteGeneralisationM, siteMinCount: f.siteMinCount } },
        clientAddress: context?.clientAddress,
      });
    });
    return { ok: "Settings saved." };
  });
}

export default function ProjectSettings({ loaderData }: Route.ComponentProps) {
  const { project } = loaderData;
  const result = useActionData<typeof action>();
  const p = result && "field" in result ? result : null;
  return (
    <div className="max-w-xl space-y-6">
      <h1 className="text-2xl font-semibold">Settings</h1>
      <FormOutcome result={result} />
      <Form method="post" className="space-y-4">
        <Field label="Name" name="name" defaultValue={project.name} required maxLength={120} problem={p?.field === "name" ? p.error : null} />
        <Field label="Summary" name="summary" defaultValue={project.summary} maxLength={2000} />
        <p className="text-sm text-sediment-600">Projected CRS: EPSG:{project.crsEpsg} (fixed: every layer is analysed in it).</p>
        <fieldset className="space-y-3 rounded-sm border border-sand-200 p-3">
          <legend className="px-1 text-sm font-medium">Known sites for viewers</legend>
          <Field
            label="Generalise positions to cells of (m)"
            name="siteGeneralisationM"
            defaultValue={project.siteGeneralisationM}
            inputMode="numeric"
            hint="Viewers see sites only as counts at the centres of cells this size."
            problem={p?.field === "siteGeneralisationM" ? p.error : null}
          />
          <Field
            label="Leave out cells with fewer sites than"
            name="siteMinCount"
            defaultValue={project.siteMinCount}
            inputMode="numeric"
            hint="Small-count suppression: a cell holding one or two sites can give a place away."
            problem={p?.field === "siteMinCount" ? p.error : null}
          />
        </fieldset>
        <PrimaryButton type="submit">Save</PrimaryButton>
      </Form>
    </div>
  );
}
