// The local SMTP catcher for development and tests: a real SMTP server on loopback (smtp-server)
// that stores every message it receives in the caught_mail table, where every process can read it.
// Never used in production (set SMTP_URL to a real relay there).
import { SMTPServer } from "smtp-server";
import pg from "pg";

export interface CatcherHandle {
  port: number;
  close(): Promise<void>;
}

export async function startMailCatcher(opts: { port: number; databaseUrl: string; host?: string }): Promise<CatcherHandle> {
  const pool = new pg.Pool({ connectionString: opts.databaseUrl, max: 2, application_name: "lowstand-mail-catcher" });
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ["STARTTLS", "AUTH"],
    size: 5 * 1024 * 1024,
    banner: "Lowstand local mail catcher",
    logger: false,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on("data", (c: Buffer) => chunks.push(c));
      stream.on("end", async () => {
        try {
          const raw = Buffer.concat(chunks).toString("utf8");
          const from = session.envelope.mailFrom ? session.envelope.mailFrom.address : "";
          const to = session.envelope.rcptTo.map((r) => r.address);
          await pool.query(
            "insert into caught_mail (envelope_from, envelope_to, subject, text_body, raw) values ($1, $2, $3, $4, $5)",
            [from, to, headerValue(raw, "subject"), plainTextPart(raw), raw],
          );
          callback();
        } catch (err) {
          callback(err as Error);
        }
      });
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(opts.port, opts.host ?? "127.0.0.1", () => resolve());
  });
  const address = server.server.address();
  const port = typeof address === "object" && address ? address.port : opts.port;
  return {
    port,
    async close() {
      await new Promise<void>((r) => server.close(() => r()));
      await pool.end();
    },
  };
}

// --- a small MIME reader, enough for the messages we send ourselves ---------------------------

function splitHead(raw: string): [string, string] {
  const i = raw.search(/\r?\n\r?\n/);
  if (i < 0) return [raw, ""];
  const m = /\r?\n\r?\n/.exec(raw.slice(i))!;
  return [raw.slice(0, i), raw.slice(i + m[0].length)];
}

export function headerValue(raw: string, name: string): string {
  const [head] = splitHead(raw);
  const unfolded = head.replace(/\r?\n[ \t]+/g, " ");
  const m = new RegExp(`^${name}:[ \\t]*(.*)$`, "im").exec(unfolded);
  return m ? decodeEncodedWords(m[1].trim()) : "";
}

function decodeEncodedWords(s: string): string {
  return s.replace(/=\?([^?]+)\?([bBqQ])\?([^?]*)\?=\s*/g, (_, _charset, enc: string, text: string) =>
    enc.toUpperCase() === "B"
      ? Buffer.from(text, "base64").toString("utf8")
      : decodeQuotedPrintable(text.replace(/_/g, " ")),
  );
}

export function decodeQuotedPrintable(s: string): string {
  const bytes: number[] = [];
  const soft = s.replace(/=\r?\n/g, "");
  for (let i = 0; i < soft.length; i++) {
    const c = soft[i];
    if (c === "=" && /^[0-9A-Fa-f]{2}$/.test(soft.slice(i + 1, i + 3))) {
      bytes.push(parseInt(soft.slice(i + 1, i + 3), 16));
      i += 2;
    } else {
      for (const b of Buffer.from(c, "utf8")) bytes.push(b);
    }
  }
  return Buffer.from(bytes).toString("utf8");
}

function decodeBody(head: string, body: string): string {
  const enc = (/^content-transfer-encoding:\s*(\S+)/im.exec(head)?.[1] ?? "7bit").toLowerCase();
  if (enc === "base64") return Buffer.from(body.replace(/\s+/g, ""), "base64").toString("utf8");
  if (enc === "quoted-printable") return decodeQuotedPrintable(body);
  return body;
}

/** The decoded text/plain part of a message (or its whole body if it is not multipart). */
export function plainTextPart(raw: string): string {
  const [head, body] = splitHead(raw);
  const unfolded = head.replace(/\r?\n[ \t]+/g, " ");
  const type = /^content-type:\s*([^;\r\n]+)(.*)$/im.exec(unfolded);
  if (type && /^multipart\//i.test(type[1])) {
    const boundary = /boundary="?([^";]+)"?/i.exec(type[2])?.[1];
    if (!boundary) return "";
    for (const part of body.split(`--${boundary}`)) {
      const [ph, pb] = splitHead(part.replace(/^\r?\n/, ""));
      const inner = /^content-type:\s*([^;\r\n]+)/im.exec(ph.replace(/\r?\n[ \t]+/g, " "))?.[1] ?? "";
      if (/^multipart\//i.test(inner)) {
        const nested = plainTextPart(part.replace(/^\r?\n/, ""));
        if (nested) return nested;
      } else if (/^text\/plain/i.test(inner)) {
        return decodeBody(ph, pb).replace(/\r?\n$/, "");
      }
    }
    return "";
  }
  return decodeBody(unfolded, body);
}
