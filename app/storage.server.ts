// Object storage: where uploaded files and derived layers live. Two drivers chosen by environment:
//   STORAGE_DRIVER=fs (default): files under STORAGE_DIR (default ./storage, git-ignored)
//   STORAGE_DRIVER=s3: an S3-compatible bucket (S3_BUCKET, S3_ENDPOINT, S3_REGION, AWS credentials)
// Keys are made by the server only (makeKey), never from a user's file name.
import { createReadStream, createWriteStream } from "node:fs";
import fs from "node:fs/promises";
import path from "node:path";
import { randomBytes } from "node:crypto";
import { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import {
  DeleteObjectCommand,
  GetObjectCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  PutObjectCommand,
  S3Client,
} from "@aws-sdk/client-s3";

export interface ObjectStore {
  readonly driver: "fs" | "s3";
  /** Stores bytes (a buffer or a local file's path, streamed) under `key`. */
  put(key: string, body: Uint8Array | { filePath: string }, contentType?: string): Promise<void>;
  /** A stream of the object's bytes; throws ObjectNotFound when absent. */
  get(key: string): Promise<Readable>;
  getBytes(key: string): Promise<Uint8Array>;
  exists(key: string): Promise<boolean>;
  delete(key: string): Promise<void>;
  /** Keys under a prefix, with their last-modified time (for sweeping). */
  list(prefix: string): AsyncIterable<{ key: string; modified: Date }>;
}

export class ObjectNotFound extends Error {}

const KEY_RE = /^[a-z0-9][a-z0-9/_.-]{0,500}$/;

/** A fresh server-made key: `<area>/<project>/<random>[.<ext>]`. */
export function makeKey(area: string, projectId: number, ext = ""): string {
  const safeExt = ext.replace(/[^a-z0-9]/gi, "").toLowerCase().slice(0, 8);
  return `${area}/p${projectId}/${new Date().toISOString().slice(0, 10)}/${randomBytes(12).toString("hex")}${safeExt ? `.${safeExt}` : ""}`;
}

function checkKey(key: string) {
  if (!KEY_RE.test(key) || key.includes("..") || key.includes("//")) throw new Error(`refusing an unsafe storage key: ${JSON.stringify(key)}`);
}

// ---------------------------------------------------------------------------------------------

export class FsStore implements ObjectStore {
  readonly driver = "fs" as const;
  constructor(readonly root: string) {}

  private file(key: string) {
    checkKey(key);
    return path.join(this.root, key);
  }

  async put(key: string, body: Uint8Array | { filePath: string }) {
    const target = this.file(key);
    await fs.mkdir(path.dirname(target), { recursive: true });
    // Write beside, then rename: a reader never sees half an object.
    const tmp = `${target}.part-${randomBytes(4).toString("hex")}`;
    try {
      if (body instanceof Uint8Array) await fs.writeFile(tmp, body);
      else await pipeline(createReadStream(body.filePath), createWriteStream(tmp));
      await fs.rename(tmp, target);
    } catch (e) {
      await fs.rm(tmp, { force: true });
      throw e;
    }
  }

  async get(key: string): Promise<Readable> {
    const f = this.file(key);
    try {
      await fs.access(f);
    } catch {
      throw new ObjectNotFound(key);
    }
    return createReadStream(f);
  }

  async getBytes(key: string) {
    try {
      return new Uint8Array(await fs.readFile(this.file(key)));
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code === "ENOENT") throw new ObjectNotFound(key);
      throw e;
    }
  }

  async exists(key: string) {
    try {
      await fs.access(this.file(key));
      return true;
    } catch {
      return false;
    }
  }

  async delete(key: string) {
    await fs.rm(this.file(key), { force: true });
  }

  async *list(prefix: string) {
    const base = path.join(this.root, prefix);
    const walk = async function* (dir: string, root: string): AsyncGenerator<{ key: string; modified: Date }> {
      let entries;
      try {
        entries = await fs.readdir(dir, { withFileTypes: true });
      } catch {
        return;
      }
      for (const e of entries) {
        const p = path.join(dir, e.name);
        if (e.isDirectory()) yield* walk(p, root);
        else if (!e.name.includes(".part-")) yield { key: path.relative(root, p).split(path.sep).join("/"), modified: (await fs.stat(p)).mtime };
      }
    };
    yield* walk(base, this.root);
  }
}

// ---------------------------------------------------------------------------------------------

export class S3Store implements ObjectStore {
  readonly driver = "s3" as const;
  readonly client: S3Client;
  constructor(
    readonly bucket: string,
    opts: { endpoint?: string; region?: string; accessKeyId?: string; secretAccessKey?: string },
  ) {
    this.client = new S3Client({
      endpoint: opts.endpoint,
      region: opts.region ?? "us-east-1",
      forcePathStyle: true,
      // Without these, SDK v3 adds checksums some S3-compatible servers mishandle, silently corrupting uploads.
      requestChecksumCalculation: "WHEN_REQUIRED",
      responseChecksumValidation: "WHEN_REQUIRED",
      credentials: opts.accessKeyId ? { accessKeyId: opts.accessKeyId, secretAccessKey: opts.secretAccessKey ?? "" } : undefined,
    });
  }

  async put(key: string, body: Uint8Array | { filePath: string }, contentType = "application/octet-stream") {
    checkKey(key);
    let payload: Uint8Array | Readable;
    let length: number;
    if (body instanceof Uint8Array) {
      payload = body;
      length = body.byteLength;
    } else {
      length = (await fs.stat(body.filePath)).size;
      payload = createReadStream(body.filePath);
    }
    await this.client.send(new PutObjectCommand({ Bucket: this.bucket, Key: key, Body: payload, ContentLength: length, ContentType: contentType }));
  }

  async get(key: string): Promise<Readable> {
    checkKey(key);
    try {
      const out = await this.client.send(new GetObjectCommand({ Bucket: this.bucket, Key: key }));
      return out.Body as Readable;
    } catch (e) {
      if (isNotFound(e)) throw new ObjectNotFound(key);
      throw e;
    }
  }

  async getBytes(key: string) {
    const stream = await this.get(key);
    const chunks: Buffer[] = [];
    for await (const c of stream) chunks.push(Buffer.from(c));
    return new Uint8Array(Buffer.concat(chunks));
  }

  async exists(key: string) {
    checkKey(key);
    try {
      await this.client.send(new HeadObjectCommand({ Bucket: this.bucket, Key: key }));
      return true;
    } catch (e) {
      if (isNotFound(e)) return false;
      throw e;
    }
  }

  async delete(key: string) {
    checkKey(key);
    await this.client.send(new DeleteObjectCommand({ Bucket: this.bucket, Key: key }));
  }

  async *list(prefix: string) {
    let token: string | undefined;
    do {
      const out = await this.client.send(new ListObjectsV2Command({ Bucket: this.bucket, Prefix: prefix, ContinuationToken: token }));
      for (const o of out.Contents ?? []) if (o.Key) yield { key: o.Key, modified: o.LastModified ?? new Date(0) };
      token = out.IsTruncated ? out.NextContinuationToken : undefined;
    } while (token);
  }
}

function isNotFound(e: unknown): boolean {
  const err = e as { name?: string; $metadata?: { httpStatusCode?: number } };
  return err?.name === "NoSuchKey" || err?.name === "NotFound" || err?.$metadata?.httpStatusCode === 404;
}

// ---------------------------------------------------------------------------------------------

const g = globalThis as unknown as { lowstandStore?: ObjectStore; lowstandStoreConfig?: string };

/** The store configured by the environment (one per process; re-made if the settings change). */
export function store(): ObjectStore {
  const driver = process.env.STORAGE_DRIVER ?? "fs";
  const config = `${driver}|${process.env.STORAGE_DIR}|${process.env.S3_BUCKET}|${process.env.S3_ENDPOINT}`;
  if (g.lowstandStore && g.lowstandStoreConfig === config) return g.lowstandStore;
  if (driver === "s3") {
    const bucket = process.env.S3_BUCKET;
    if (!bucket) throw new Error("STORAGE_DRIVER=s3 needs S3_BUCKET (and S3_ENDPOINT for a non-AWS service)");
    g.lowstandStore = new S3Store(bucket, {
      endpoint: process.env.S3_ENDPOINT,
      region: process.env.S3_REGION,
      accessKeyId: process.env.AWS_ACCESS_KEY_ID,
      secretAccessKey: process.env.AWS_SECRET_ACCESS_KEY,
    });
  } else if (driver === "fs") {
    g.lowstandStore = new FsStore(path.resolve(process.env.STORAGE_DIR ?? "storage"));
  } else {
    throw new Error(`STORAGE_DRIVER must be "fs" or "s3", not ${JSON.stringify(driver)}`);
  }
  g.lowstandStoreConfig = config;
  return g.lowstandStore;
}

/** Reads a stored JSON object (the normalised form of vector and table datasets). */
export async function getJson<T>(key: string): Promise<T> {
  return JSON.parse(new TextDecoder().decode(await store().getBytes(key))) as T;
}

/** Reads a whole Node stream into one buffer. */
export async function readAll(stream: Readable): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const c of stream) chunks.push(Buffer.from(c));
  return Buffer.concat(chunks);
}

export { Readable };
