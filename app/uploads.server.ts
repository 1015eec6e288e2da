// Multipart uploads streamed to a temporary file with a size limit — never buffered whole in
// memory (request.formData() would). The caller validates, stores and then calls `discard`.
import busboy from "busboy";
import { createWriteStream } from "node:fs";
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { randomBytes } from "node:crypto";
import { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import type { ReadableStream as NodeWebReadableStream } from "node:stream/web";
import { UserError } from "./errors";
import { formatBytes } from "./format";

export interface ReceivedFile {
  path: string;
  size: number;
  /** The name the browser sent: shown to people, never used to build a storage key or path. */
  originalName: string;
  mimeType: string;
}

export interface ReceivedUpload {
  fields: Record<string, string>;
  file: ReceivedFile | null;
  discard(): Promise<void>;
}

export function uploadMaxBytes(): number {
  return Number(process.env.UPLOAD_MAX_BYTES ?? 512 * 1024 * 1024);
}

export function uploadTempDir(): string {
  return path.join(process.env.UPLOAD_TMP_DIR ?? os.tmpdir(), "lowstand-uploads");
}

const MAX_FIELDS = 40;
const MAX_FIELD_BYTES = 16 * 1024;

/**
 * Streams a multipart/form-data request: text fields into memory (small, capped), the one file
 * part (field `fileField`) to a temp file. Over-size files and malformed bodies are refused with a
 * UserError, and the temp file is removed.
 */
export async function receiveUpload(request: Request, opts: { fileField?: string; maxBytes?: number } = {}): Promise<ReceivedUpload> {
  const fileField = opts.fileField ?? "file";
  const maxBytes = opts.maxBytes ?? uploadMaxBytes();
  const type = request.headers.get("Content-Type") ?? "";
  if (!/^multipart\/form-data/i.test(type)) {
    throw new UserError(415, "multipart_required", "Send the upload as multipart/form-data with the file in the field \"file\".");
  }
  if (!request.body) throw new UserError(400, "empty_body", "The request has no body: attach a file.");
  const declared = Number(request.headers.get("Content-Length") ?? "0");
  if (declared > maxBytes + 1024 * 1024) throw tooLarge(maxBytes);

  await fs.mkdir(uploadTempDir(), { recursive: true });
  const fields: Record<string, string> = {};
  let file: ReceivedFile | null = null;
  const temps: string[] = [];
  const discard = async () => {
    await Promise.all(temps.map((t) => fs.rm(t, { force: true })));
  };

  try {
    await new Promise<void>((resolve, reject) => {
      let bb: busboy.Busboy;
      try {
        bb = busboy({ headers: { "content-type": type }, limits: { fileSize: maxBytes, files: 1, fields: MAX_FIELDS, fieldSize: MAX_FIELD_BYTES } });
      } catch (e) {
        reject(new UserError(400, "malformed_multipart", `The upload is not well-formed multipart data: ${(e as Error).message}`));
        return;
      }
      const writes: Promise<void>[] = [];
      let failed: Error | null = null;
      const fail = (e: Error) => {
        failed ??= e;
      };
      bb.on("field", (name, value, info) => {
        if (info.valueTruncated) fail(new UserError(413, "field_too_long", `The field "${name}" is longer than ${MAX_FIELD_BYTES} bytes.`));
        else fields[name] = value;
      });
      bb.on("file", (name, stream, info) => {
        if (name !== fileField || file) {
          stream.resume();
          if (name !== fileField) fail(new UserError(400, "unexpected_file", `Put the file in the field "${fileField}", not "${name}".`));
          return;
        }
        const tmp = path.join(uploadTempDir(), `${Date.now()}-${randomBytes(8).toString("hex")}.part`);
        temps.push(tmp);
        const received: ReceivedFile = { path: tmp, size: 0, originalName: (info.filename ?? "").slice(0, 255), mimeType: info.mimeType };
        file = received;
        stream.on("data", (c: Buffer) => (received.size += c.length));
        stream.on("limit", () => fail(tooLarge(maxBytes)));
        writes.push(pipeline(stream, createWriteStream(tmp)));
      });
      bb.on("filesLimit", () => fail(new UserError(400, "one_file_only", "Upload one file at a time.")));
      bb.on("fieldsLimit", () => fail(new UserError(400, "too_many_fields", "The upload has too many fields.")));
      bb.on("error", (e) => reject(new UserError(400, "malformed_multipart", `The upload is not well-formed multipart data: ${(e as Error).message}`)));
      bb.on("close", () => {
        Promise.all(writes).then(
          () => (failed ? reject(failed) : resolve()),
          (e) => reject(failed ?? e),
        );
      });
      Readable.fromWeb(request.body as unknown as NodeWebReadableStream).on("error", (e) => reject(e)).pipe(bb);
    });
  } catch (e) {
    await discard();
    throw e;
  }
  return { fields, file, discard };
}

function tooLarge(maxBytes: number) {
  return new UserError(413, "file_too_large", `The file is larger than the upload limit of ${formatBytes(maxBytes)}.`);
}


/** Removes temp files older than `maxAgeMs` (left by crashed requests). Returns how many. */
export async function sweepUploadTemp(maxAgeMs = 6 * 3600_000): Promise<number> {
  let removed = 0;
  let names: string[];
  try {
    names = await fs.readdir(uploadTempDir());
  } catch {
    return 0;
  }
  for (const n of names) {
    const p = path.join(uploadTempDir(), n);
    const st = await fs.stat(p).catch(() => null);
    if (st && Date.now() - st.mtimeMs > maxAgeMs) {
      await fs.rm(p, { force: true });
      removed++;
    }
  }
  return removed;
}
