// The developers' outbox: what the local SMTP catcher received. Development only: 404 in production.
import { formatUtc } from "~/format";
import { desc } from "drizzle-orm";
import { db } from "~/db.server";
import { caughtMail } from "~/db/schema";
import type { Route } from "./+types/dev-outbox";

export function outboxEnabled(): boolean {
  return process.env.NODE_ENV !== "production" || process.env.LOWSTAND_DEV_OUTBOX === "1";
}

const LOOPBACK = new Set(["127.0.0.1", "::1", "::ffff:127.0.0.1"]);

export async function loader({ context }: Route.LoaderArgs) {
  // Only where mail goes to the local catcher, and only to a browser on this machine.
  if (!outboxEnabled() || !LOOPBACK.has(context?.clientAddress ?? "")) throw new Response("Not found", { status: 404 });
  const rows = await db()
    .select({ id: caughtMail.id, to: caughtMail.envelopeTo, subject: caughtMail.subject, text: caughtMail.textBody, at: caughtMail.receivedAt })
    .from(caughtMail)
    .orderBy(desc(caughtMail.id))
    .limit(100);
  return { messages: rows.map((r) => ({ ...r, at: r.at.toISOString() })) };
}

export default function DevOutbox({ loaderData }: Route.ComponentProps) {
  return (
    <main className="mx-auto max-w-4xl px-6 py-8">
      <h1 className="text-2xl font-semibold">Outbox (development)</h1>
      <p className="text-sm text-sediment-600">Messages the local SMTP catcher received, newest first. Not available in production.</p>
      <ol className="mt-4 space-y-4">
        {loaderData.messages.map((m) => (
          <li key={m.id} className="rounded-md border border-sand-200 bg-white p-3">
            <p className="text-xs text-sediment-600 tabular-nums">
              {formatUtc(m.at, true)} → {m.to.join(", ")}
            </p>
            <p className="font-medium">{m.subject}</p>
            <pre className="mt-2 whitespace-pre-wrap font-sans text-sm">{m.text}</pre>
          </li>
        ))}
      </ol>
    </main>
  );
}
