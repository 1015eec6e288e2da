// Creates a user directly — the way in for the first user of an installation besides the demo seed.
//   npm run user:create -- --email someone@example.org --name "Full Name" [--may-create-projects]
// The password is read from standard input (one line), so it never appears in the shell history.
import { parseArgs } from "node:util";
import { createInterface } from "node:readline/promises";
import { createUserDirect } from "../app/accounts.server";
import { pool } from "../app/db.server";
import { email, password, personName } from "../app/validation";

const { values } = parseArgs({ options: { email: { type: "string" }, name: { type: "string" }, "may-create-projects": { type: "boolean", default: false } } });
const e = email.safeParse(values.email ?? "");
const n = personName.safeParse(values.name ?? "");
if (!e.success || !n.success) {
  console.error(`create-user: ${!e.success ? `--email: ${e.error.issues[0].message}` : `--name: ${n.error!.issues[0].message}`}`);
  process.exit(2);
}
const rl = createInterface({ input: process.stdin, output: process.stdout, terminal: process.stdin.isTTY });
const pw = password.safeParse(await rl.question(process.stdin.isTTY ? "Password (10+ characters): " : ""));
rl.close();
if (!pw.success) {
  console.error(`create-user: password: ${pw.error.issues[0].message}`);
  process.exit(2);
}
try {
  const id = await createUserDirect({ email: e.data, name: n.data, password: pw.data, mayCreateProjects: values["may-create-projects"] });
  console.log(`[user] created ${e.data} (id ${id})${values["may-create-projects"] ? ", may create projects" : ""}`);
} catch (err) {
  if (/users_email_key/.test(String((err as { constraint?: string }).constraint ?? err))) {
    console.error(`create-user: an account for ${e.data} exists already`);
    process.exit(1);
  }
  throw err;
} finally {
  await pool().end();
}
