// What the production server (server.mjs) hands every loader and action, beside the request.
export interface LowstandLoadContext {
  /** The client's address as the server saw it (after trusted proxies, if configured). */
  clientAddress: string;
  /** A short id for this request, also in the server's log line and the X-Request-Id header. */
  requestId: string;
}

declare module "react-router" {
  interface AppLoadContext extends LowstandLoadContext {}
}
