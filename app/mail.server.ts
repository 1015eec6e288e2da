// Outgoing e-mail. Messages are queued in the mail_outbox table in the same transaction as the
// change that causes them (an invitation, a reset), then delivered over SMTP by a dispatcher that
// any app or worker process may run: rows are claimed with SKIP LOCKED, failures retried with backoff.
// In development and tests SMTP goes to the local catcher (mail-catcher.server.ts).
import nodemailer, { type Transporter } from "nodemailer";
import { sql } from "drizzle-orm";
import { db, type Db } from "./db.server";
import { mailOutbox } from "./db/schema";

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html?: string;
}

type Executor = Pick<Db, "insert">;

export async function queueMail(database: Executor, mail: OutgoingMail): Promise<void> {
  await database.insert(mailOutbox).values({ toAddress: mail.to, subject: mail.subject, textBody: mail.text, htmlBody: mail.html ?? null });
}

export function smtpUrl(): string {
  return process.env.SMTP_URL ?? `smtp://127.0.0.1:${process.env.SMTP_PORT ?? 2525}`;
}

export function mailFrom(): string {
  return process.env.MAIL_FROM ?? "Lowstand <lowstand@lowstand.invalid>";
}

let transporter: Transporter | undefined;
let transporterUrl = "";
function transport(): Transporter {
  const url = smtpUrl();
  if (!transporter || transporterUrl !== url) {
    transporter = nodemailer.createTransport(url);
    transporterUrl = url;
  }
  return transporter;
}

/** Delivers up to `limit` due messages; returns how many were sent. Safe to run in several processes. */
export async function deliverPendingMail(limit = 20): Promise<number> {
  let sent = 0;
  await db().transaction(async (tx) => {
    const due = await tx.execute<{ id: number; to_address: string; subject: string; text_body: string; html_body: string | null; attempts: number }>(sql`
      select id, to_address, subject, text_body, html_body, attempts from mail_outbox
       where sent_at is null and next_attempt_at <= now() and attempts < 8
       order by id limit ${limit} for update skip locked`);
    for (const m of due.rows) {
      try {
        await transport().sendMail({ from: mailFrom(), to: m.to_address, subject: m.subject, text: m.text_body, html: m.html_body ?? undefined });
        await tx.execute(sql`update mail_outbox set sent_at = now(), attempts = attempts + 1, last_error = null where id = ${m.id}`);
        sent++;
      } catch (err) {
        const backoffSeconds = Math.min(30 * 2 ** m.attempts, 3600);
        await tx.execute(sql`update mail_outbox set attempts = attempts + 1, last_error = ${String((err as Error).message).slice(0, 500)},
          next_attempt_at = now() + make_interval(secs => ${backoffSeconds}) where id = ${m.id}`);
        console.error(`[mail] delivery of message ${m.id} failed (attempt ${m.attempts + 1}):`, (err as Error).message);
      }
    }
  });
  return sent;
}

const g = globalThis as unknown as { lowstandMailTimer?: NodeJS.Timeout; lowstandMailBusy?: boolean };

/** Delivers now rather than at the next tick (call after committing a change that queued mail). */
export function kickMailDispatcher(): void {
  if (!g.lowstandMailTimer) return;
  void runDispatcherOnce();
}

async function runDispatcherOnce() {
  if (g.lowstandMailBusy) return;
  g.lowstandMailBusy = true;
  try {
    while ((await deliverPendingMail()) > 0) {
      /* drain */
    }
  } catch (err) {
    console.error("[mail] dispatcher:", (err as Error).message);
  } finally {
    g.lowstandMailBusy = false;
  }
}

/** Starts the periodic dispatcher in this process (idempotent). */
export function startMailDispatcher(intervalMs = 2_000): void {
  if (g.lowstandMailTimer) return;
  g.lowstandMailTimer = setInterval(() => void runDispatcherOnce(), intervalMs);
  g.lowstandMailTimer.unref();
}

export function stopMailDispatcher(): void {
  clearInterval(g.lowstandMailTimer);
  g.lowstandMailTimer = undefined;
}

export { mailOutbox };
