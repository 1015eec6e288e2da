// A real SMTP catcher for a test file: mail the code queues is delivered over SMTP to it and read
// back from the caught_mail table.
import { desc, sql } from "drizzle-orm";
import { db } from "~/db.server";
import { caughtMail } from "~/db/schema";
import { deliverPendingMail } from "~/mail.server";
import { startMailCatcher, type CatcherHandle } from "~/mail-catcher.server";

export async function startTestCatcher(): Promise<CatcherHandle> {
  const handle = await startMailCatcher({ port: 0, databaseUrl: process.env.DATABASE_URL! });
  process.env.SMTP_URL = `smtp://127.0.0.1:${handle.port}`;
  return handle;
}

/** Delivers what is queued, then returns the newest message caught for `to`. */
export async function latestMailTo(to: string) {
  await deliverPendingMail();
  const [m] = await db()
    .select()
    .from(caughtMail)
    .where(sql`${to} = any(${caughtMail.envelopeTo})`)
    .orderBy(desc(caughtMail.id))
    .limit(1);
  return m;
}

export function linkIn(text: string, path: string): string {
  const m = new RegExp(`https?://\\S+${path}/\\S+`).exec(text);
  if (!m) throw new Error(`no ${path} link in:\n${text}`);
  return m[0];
}
