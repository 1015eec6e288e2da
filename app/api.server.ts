// Helpers for the JSON API under /api/: bodies size-capped and validated, errors in one shape.
import type { z } from "zod";
import { apiError } from "./security.server";

export const MAX_JSON_BYTES = 64 * 1024;

/**
 * Reads a JSON body: requires a JSON content type (a CSRF guard too: HTML forms cannot send it),
 * refuses bodies over `maxBytes`, malformed JSON and anything the schema rejects — each with a
 * 4xx response in `{ error: { code, message } }` that names the problem. Throws the response.
 */
export async function readJson<S extends z.ZodType>(request: Request, schema: S, maxBytes = MAX_JSON_BYTES): Promise<z.infer<S>> {
  const type = request.headers.get("Content-Type") ?? "";
  if (!/^application\/json\b/i.test(type)) {
    throw apiError(415, "json_required", "Send the request body as JSON with Content-Type: application/json.");
  }
  const declared = Number(request.headers.get("Content-Length") ?? "0");
  if (declared > maxBytes) throw apiError(413, "body_too_large", `The request body is larger than ${maxBytes} bytes.`);
  const text = await readCapped(request, maxBytes);
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (e) {
    throw apiError(400, "malformed_json", `The request body is not valid JSON: ${(e as Error).message}`);
  }
  const parsed = schema.safeParse(value);
  if (!parsed.success) throw apiError(422, "invalid_fields", describeIssues(parsed.error));
  return parsed.data;
}

async function readCapped(request: Request, maxBytes: number): Promise<string> {
  if (!request.body) return "";
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.byteLength;
    if (total > maxBytes) {
      await reader.cancel();
      throw apiError(413, "body_too_large", `The request body is larger than ${maxBytes} bytes.`);
    }
    chunks.push(value);
  }
  return Buffer.concat(chunks).toString("utf8");
}

/** One readable sentence per problem, naming the field. */
export function describeIssues(error: z.ZodError): string {
  return error.issues.map((i) => `${i.path.length ? i.path.join(".") : "body"}: ${i.message}`).join("; ");
}
