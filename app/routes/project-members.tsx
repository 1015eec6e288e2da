// Members of a project: who is in it with which role; owners and leads invite, change and remove.
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { useEffect } from "react";
import { Form, useActionData, useNavigation } from "react-router";
import { z } from "zod";
import { requireProjectAccess } from "~/permissions.server";
import { changeMemberRole, inviteMember, removeMember, revokeInvitation, setCustodian } from "~/projects.server";
import { memberListing, type MemberListing } from "~/members.server";
import { formAction, parseForm } from "~/route-helpers.server";
import { UserError } from "~/errors";
import { communityName, invitationFields, role as roleRule } from "~/validation";
import { can, mayAssignRole, ROLE_DUTIES, ROLE_LABELS, ROLES, type Role } from "~/permissions";
import { Field, FormProblemNote, IntentButton, PrimaryButton, QuietButton } from "~/components/forms/Field";
import type { Route } from "./+types/project-members";

export const meta = () => [{ title: "Members · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "members.read");
  return { projectId: project.id, role, me: identity.user.id, listing: await memberListing(project.id, role) };
}

const idField = z.coerce.number({ error: "Missing id." }).int().positive("Missing id.");

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "members.manage");
  const form = await request.formData();
  const meta = { clientAddress: context?.clientAddress };
  return formAction(async () => {
    const intent = String(form.get("intent") ?? "");
    switch (intent) {
      case "invite": {
        const f = parseForm(invitationFields, form);
        await inviteMember(identity.user, role, project, f, meta);
        return { ok: `Invitation sent to ${f.email}.` };
      }
      case "change-role": {
        const f = parseForm(z.object({ userId: idField, role: roleRule }), form);
        await changeMemberRole(identity.user, role, project.id, f.userId, f.role, meta);
        return { ok: "Role changed." };
      }
      case "remove": {
        const f = parseForm(z.object({ userId: idField }), form);
        await removeMember(identity.user, role, project.id, f.userId, meta);
        return { ok: "Member removed; their sessions have ended." };
      }
      case "set-custodian": {
        const f = parseForm(z.object({ userId: idField, community: communityName }), form);
        await setCustodian(identity.user, project.id, f.userId, f.community, meta);
        return { ok: f.community ? `Custodian for ${f.community} set.` : "Custodian role cleared." };
      }
      case "revoke-invitation": {
        const f = parseForm(z.object({ invitationId: idField }), form);
        await revokeInvitation(identity.user, project.id, f.invitationId, meta);
        return { ok: "Invitation withdrawn." };
      }
      default:
        throw new UserError(400, "unknown_intent", "Choose what to do: invite, change-role, remove, set-custodian or revoke-invitation.");
    }
  });
}

export default function ProjectMembers({ loaderData }: Route.ComponentProps) {
  const { projectId, role, me } = loaderData;
  const result = useActionData<typeof action>();
  const navigation = useNavigation();
  const queryClient = useQueryClient();
  // The list refreshes from the API (others may change it meanwhile), seeded by the loader.
  const { data: listing } = useQuery<MemberListing>({
    queryKey: ["members", projectId],
    queryFn: async () => {
      const res = await fetch(`/api/projects/${projectId}/members`, { headers: { Accept: "application/json" } });
      if (!res.ok) throw new Error(`members: ${res.status}`);
      return res.json();
    },
    initialData: loaderData.listing,
    refetchInterval: 30_000,
  });
  useEffect(() => {
    if (navigation.state === "idle" && result) void queryClient.invalidateQueries({ queryKey: ["members", projectId] });
  }, [navigation.state, result, queryClient, projectId]);
  const manage = can(role, "members.manage");
  const problem = result && "error" in result ? result : null;
  const ok = result && "ok" in result ? result.ok : null;

  return (
    <div className="max-w-4xl space-y-6">
      <h1 className="text-2xl font-semibold">Members</h1>
      <FormProblemNote message={problem?.error} />
      {ok ? (
        <p role="status" className="rounded-sm border-l-4 border-deep-500 bg-sea-200/40 px-3 py-2 text-sm">
          {ok}
        </p>
      ) : null}
      <table className="w-full text-sm">
        <thead className="border-b border-sand-300 text-left text-xs uppercase tracking-wide text-sediment-600">
          <tr>
            <th className="py-1 pr-4">Name</th>
            <th className="py-1 pr-4">E-mail</th>
            <th className="py-1 pr-4">Role</th>
            <th className="py-1 pr-4">Custodian for</th>
            {manage ? <th className="py-1">Change</th> : null}
          </tr>
        </thead>
        <tbody>
          {listing.members.map((m) => (
            <tr key={m.userId} className="border-b border-sand-100">
              <td className="py-1.5 pr-4">
                {m.name}
                {m.userId === me ? <span className="text-xs text-sediment-600"> (you)</span> : null}
              </td>
              <td className="py-1.5 pr-4">{m.email}</td>
              <td className="py-1.5 pr-4">{ROLE_LABELS[m.role as Role]}</td>
              <td className="py-1.5 pr-4">
                {manage ? (
                  <Form method="post" className="flex gap-1">
                    <input type="hidden" name="intent" value="set-custodian" />
                    <input type="hidden" name="userId" value={m.userId} />
                    <input
                      name="community"
                      defaultValue={m.custodianFor ?? ""}
                      placeholder="—"
                      aria-label={`Community ${m.name} speaks for as custodian`}
                      className="w-32 rounded-sm border border-sand-300 px-1 text-sm"
                    />
                    <QuietButton type="submit">Save</QuietButton>
                  </Form>
                ) : (
                  (m.custodianFor ?? "—")
                )}
              </td>
              {manage ? (
                <td className="py-1.5">
                  {mayAssignRole(role, m.role as Role, m.role as Role) ? (
                    <div className="flex gap-2">
                      <Form method="post" className="flex gap-1">
                        <input type="hidden" name="intent" value="change-role" />
                        <input type="hidden" name="userId" value={m.userId} />
                        <label className="sr-only" htmlFor={`role-${m.userId}`}>
                          Role of {m.name}
                        </label>
                        <select id={`role-${m.userId}`} name="role" defaultValue={m.role} className="rounded-sm border border-sand-300 bg-white px-1 text-sm">
                          {ROLES.filter((r) => mayAssignRole(role, r, m.role as Role)).map((r) => (
                            <option key={r} value={r}>
                              {ROLE_LABELS[r]}
                            </option>
                          ))}
                        </select>
                        <QuietButton type="submit">Set</QuietButton>
                      </Form>
                      <IntentButton intent="remove" fields={{ userId: m.userId }} danger label={`Remove ${m.name}`}>
                        Remove
                      </IntentButton>
                    </div>
                  ) : (
                    <span className="text-xs text-sediment-600">an owner manages this member</span>
                  )}
                </td>
              ) : null}
            </tr>
          ))}
        </tbody>
      </table>

      {manage ? (
        <section className="grid gap-6 md:grid-cols-2">
          <Form method="post" className="space-y-3 rounded-md border border-sand-200 bg-white p-4">
            <h2 className="font-semibold">Invite someone</h2>
            <input type="hidden" name="intent" value="invite" />
            <Field label="E-mail" name="email" type="email" required problem={problem?.field === "email" ? problem.error : null} />
            <div className="space-y-1">
              <label htmlFor="invite-role" className="block text-sm font-medium">
                Role
              </label>
              <select id="invite-role" name="role" defaultValue="viewer" className="block w-full rounded-sm border border-sand-300 bg-white px-2 py-1.5">
                {ROLES.filter((r) => mayAssignRole(role, r)).map((r) => (
                  <option key={r} value={r}>
                    {ROLE_LABELS[r]} — {ROLE_DUTIES[r]}
                  </option>
                ))}
              </select>
            </div>
            <PrimaryButton type="submit">Send the invitation</PrimaryButton>
            <p className="text-xs text-sediment-600">The link works once and expires in 7 days.</p>
          </Form>
          <div>
            <h2 className="font-semibold">Pending invitations</h2>
            {listing.invitations.length === 0 ? (
              <p className="mt-1 text-sm text-sediment-600">None.</p>
            ) : (
              <ul className="mt-2 space-y-1 text-sm">
                {listing.invitations.map((i) => (
                  <li key={i.id} className="flex items-center justify-between gap-2">
                    <span>
                      {i.email} · {ROLE_LABELS[i.role as Role].toLowerCase()} · until {i.expiresAt.slice(0, 10)}
                    </span>
                    <IntentButton intent="revoke-invitation" fields={{ invitationId: i.id }}>
                      Withdraw
                    </IntentButton>
                  </li>
                ))}
              </ul>
            )}
          </div>
        </section>
      ) : null}
    </div>
  );
}
