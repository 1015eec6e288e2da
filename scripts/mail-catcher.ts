// The local SMTP catcher as a process: `node scripts/run-ts.mjs scripts/mail-catcher.ts`.
// Listens on 127.0.0.1:SMTP_PORT (2525) and stores messages in DATABASE_URL's caught_mail table.
import { startMailCatcher } from "../app/mail-catcher.server";

const port = Number(process.env.SMTP_PORT ?? 2525);
const url = process.env.DATABASE_URL;
if (!url) {
  console.error("mail-catcher: DATABASE_URL is not set");
  process.exit(2);
}
const handle = await startMailCatcher({ port, databaseUrl: url });
console.log(`[mail] local catcher listening on smtp://127.0.0.1:${handle.port} (read it at /dev/outbox)`);
for (const sig of ["SIGINT", "SIGTERM"] as const) process.on(sig, () => void handle.close().then(() => process.exit(0)));
