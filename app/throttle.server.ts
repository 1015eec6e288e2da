// Sign-in attempts recorded in the database, so every app process throttles alike.
import { and, desc, eq, gt, sql } from "drizzle-orm";
import { db } from "./db.server";
import { loginAttempts } from "./db/schema";
import { THROTTLE, requiredWaitSeconds } from "./throttle";

async function failuresSince(column: typeof loginAttempts.emailKey | typeof loginAttempts.clientAddress, value: string) {
  const since = new Date(Date.now() - THROTTLE.windowMinutes * 60_000);
  // Failures after the latest success in the window count; a success starts afresh.
  const rows = await db()
    .select({ succeeded: loginAttempts.succeeded, at: loginAttempts.at })
    .from(loginAttempts)
    .where(and(eq(column, value), gt(loginAttempts.at, since)))
    .orderBy(desc(loginAttempts.at))
    .limit(500);
  let failures = 0;
  let last: Date | null = null;
  for (const r of rows) {
    if (r.succeeded) break;
    failures++;
    last ??= r.at;
  }
  return { failures, last };
}

/** Seconds the caller must wait before this attempt is even checked (0: go ahead). */
export async function signInWaitSeconds(emailKey: string, clientAddress: string): Promise<number> {
  const now = new Date();
  const [byAccount, byAddress] = await Promise.all([
    failuresSince(loginAttempts.emailKey, emailKey),
    failuresSince(loginAttempts.clientAddress, clientAddress),
  ]);
  return Math.max(
    requiredWaitSeconds(byAccount.failures, byAccount.last, now, THROTTLE.freePerAccount),
    requiredWaitSeconds(byAddress.failures, byAddress.last, now, THROTTLE.freePerAddress),
  );
}

export async function recordSignInAttempt(emailKey: string, clientAddress: string, succeeded: boolean): Promise<void> {
  await db().insert(loginAttempts).values({ emailKey, clientAddress, succeeded });
  // Keep the table small: attempts older than a day serve no throttling purpose.
  if (Math.random() < 0.01) await db().delete(loginAttempts).where(sql`${loginAttempts.at} < now() - interval '1 day'`);
}
