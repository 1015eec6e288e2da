// A local stand-in for a hosted S3 service: path-style PUT/GET/HEAD/DELETE of objects and
// ListObjectsV2, in memory, on loopback. Enough for the storage driver's tests; it decodes the
// SDK's aws-chunked uploads so a body is stored exactly as the client meant it.
import http from "node:http";
import type { AddressInfo } from "node:net";

export interface FakeS3 {
  endpoint: string;
  bucket: string;
  objects: Map<string, { body: Buffer; modified: Date; contentType: string }>;
  close(): Promise<void>;
}

function decodeAwsChunked(raw: Buffer): Buffer {
  const out: Buffer[] = [];
  let i = 0;
  while (i < raw.length) {
    const eol = raw.indexOf("\r\n", i);
    const header = raw.subarray(i, eol).toString("latin1");
    const size = parseInt(header.split(";")[0], 16);
    if (!Number.isFinite(size) || size === 0) break;
    out.push(raw.subarray(eol + 2, eol + 2 + size));
    i = eol + 2 + size + 2;
  }
  return Buffer.concat(out);
}

const xml = (s: string) => s.replace(/&/g, "&amp;").replace(/</g, "&lt;");

export async function startFakeS3(bucket = "lowstand-test"): Promise<FakeS3> {
  const objects: FakeS3["objects"] = new Map();
  const server = http.createServer(async (req, res) => {
    const url = new URL(req.url ?? "/", "http://x");
    const [, b, ...rest] = url.pathname.split("/");
    const key = decodeURIComponent(rest.join("/"));
    const chunks: Buffer[] = [];
    for await (const c of req) chunks.push(c as Buffer);
    let body: Buffer = Buffer.concat(chunks);
    if (b !== bucket) {
      res.writeHead(404, { "Content-Type": "application/xml" }).end("<Error><Code>NoSuchBucket</Code></Error>");
      return;
    }
    if (req.method === "GET" && !key) {
      const prefix = url.searchParams.get("prefix") ?? "";
      const keys = [...objects.keys()].filter((k) => k.startsWith(prefix)).sort();
      const contents = keys
        .map((k) => `<Contents><Key>${xml(k)}</Key><LastModified>${objects.get(k)!.modified.toISOString()}</LastModified><Size>${objects.get(k)!.body.length}</Size></Contents>`)
        .join("");
      res.writeHead(200, { "Content-Type": "application/xml" }).end(
        `<?xml version="1.0" encoding="UTF-8"?><ListBucketResult><Name>${bucket}</Name><Prefix>${xml(prefix)}</Prefix><KeyCount>${keys.length}</KeyCount><IsTruncated>false</IsTruncated>${contents}</ListBucketResult>`,
      );
      return;
    }
    const obj = objects.get(key);
    switch (req.method) {
      case "PUT": {
        const encoding = String(req.headers["content-encoding"] ?? "");
        const sha = String(req.headers["x-amz-content-sha256"] ?? "");
        if (encoding.includes("aws-chunked") || sha.startsWith("STREAMING-")) body = decodeAwsChunked(body);
        objects.set(key, { body, modified: new Date(), contentType: String(req.headers["content-type"] ?? "application/octet-stream") });
        res.writeHead(200, { ETag: '"fake"' }).end();
        return;
      }
      case "GET":
      case "HEAD":
        if (!obj) {
          res.writeHead(404, { "Content-Type": "application/xml" }).end(req.method === "GET" ? "<Error><Code>NoSuchKey</Code><Message>The specified key does not exist.</Message></Error>" : undefined);
          return;
        }
        res.writeHead(200, { "Content-Type": obj.contentType, "Content-Length": obj.body.length, "Last-Modified": obj.modified.toUTCString() });
        res.end(req.method === "GET" ? obj.body : undefined);
        return;
      case "DELETE":
        objects.delete(key);
        res.writeHead(204).end();
        return;
      default:
        res.writeHead(405).end();
    }
  });
  await new Promise<void>((r) => server.listen(0, "127.0.0.1", () => r()));
  const { port } = server.address() as AddressInfo;
  return {
    endpoint: `http://127.0.0.1:${port}`,
    bucket,
    objects,
    close: () => new Promise<void>((r) => server.close(() => r())),
  };
}
