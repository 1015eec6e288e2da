// The server entry: streams each page, adds our security headers, and starts this process's
// background services (the mail dispatcher; the local SMTP catcher when asked for).
import { PassThrough } from "node:stream";
import { createReadableStreamFromReadable } from "@react-router/node";
import { isbot } from "isbot";
import { renderToPipeableStream } from "react-dom/server";
import { ServerRouter, type EntryContext, type HandleErrorFunction } from "react-router";
import { startMailDispatcher } from "./mail.server";

export const streamTimeout = 10_000;

if (process.env.LOWSTAND_MAIL_DISPATCH !== "0") startMailDispatcher();
if (process.env.LOWSTAND_MAIL_CATCHER_PORT) {
  const port = Number(process.env.LOWSTAND_MAIL_CATCHER_PORT);
  const { startMailCatcher } = await import("./mail-catcher.server");
  await startMailCatcher({ port, databaseUrl: process.env.DATABASE_URL ?? "" });
  console.log(`[mail] local catcher listening on smtp://127.0.0.1:${port}; read it at /dev/outbox`);
}

export default function handleRequest(request: Request, responseStatusCode: number, responseHeaders: Headers, routerContext: EntryContext) {
  responseHeaders.set("X-Content-Type-Options", "nosniff");
  responseHeaders.set("Referrer-Policy", "same-origin");
  responseHeaders.set("X-Frame-Options", "DENY");
  if (request.method.toUpperCase() === "HEAD") return new Response(null, { status: responseStatusCode, headers: responseHeaders });
  return new Promise<Response>((resolve, reject) => {
    let shellRendered = false;
    const userAgent = request.headers.get("user-agent");
    const readyOption = (userAgent && isbot(userAgent)) || routerContext.isSpaMode ? "onAllReady" : "onShellReady";
    let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(() => abort(), streamTimeout + 1000);
    const { pipe, abort } = renderToPipeableStream(<ServerRouter context={routerContext} url={request.url} />, {
      [readyOption]() {
        shellRendered = true;
        const body = new PassThrough({
          final(callback) {
            clearTimeout(timeoutId);
            timeoutId = undefined;
            callback();
          },
        });
        responseHeaders.set("Content-Type", "text/html; charset=utf-8");
        pipe(body);
        resolve(new Response(createReadableStreamFromReadable(body), { headers: responseHeaders, status: responseStatusCode }));
      },
      onShellError(error: unknown) {
        reject(error);
      },
      onError(error: unknown) {
        responseStatusCode = 500;
        if (shellRendered) console.error(error);
      },
    });
  });
}

export const handleError: HandleErrorFunction = (error, { request }) => {
  if (request.signal.aborted) return;
  console.error(`[web] ${request.method} ${new URL(request.url).pathname}:`, error);
};
