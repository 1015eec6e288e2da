// Sign out: POST only (a GET cannot end a session, so a link or image cannot sign anyone out).
import { redirect } from "react-router";
import { clearSessionCookie, getIdentity, revokeSession } from "~/auth.server";
import { recordAudit } from "~/audit.server";
import { db } from "~/db.server";
import type { Route } from "./+types/logout";

export async function loader() {
  return redirect("/");
}

export async function action({ request, context }: Route.ActionArgs) {
  const identity = await getIdentity(request);
  if (identity?.sessionIdHash) {
    await revokeSession(identity.sessionIdHash);
    await recordAudit(db(), { actorUserId: identity.user.id, action: "signed_out", clientAddress: context?.clientAddress });
  }
  return redirect("/login", { headers: { "Set-Cookie": clearSessionCookie() } });
}
