// The live hub (design §8): one dedicated PostgreSQL connection per app process LISTENs on one
// channel and hands each notification to the streams of this process that asked for its topic.
// Writers NOTIFY inside the transaction of their change (PostgreSQL delivers it at commit, to every
// listening process). A notification carries only a topic and a number — payloads are capped at
// 8000 bytes, and the data lives in tables the listener reads (weighing_events) — so a missed or
// merged notification costs nothing: a listener always reads everything after what it has sent.
// When the connection drops, the hub reconnects with back-off, LISTENs again and tells every
// subscriber to resynchronise (read what it may have missed). See docs/decisions/801-live-weighing-sessions.md.
import pg from "pg";
import { sql } from "drizzle-orm";

export const LIVE_CHANNEL = "lowstand_live";

/** What a subscriber hears: a notification for its topic, or "you may have missed some: read again". */
export type LiveMessage = { kind: "notify"; topic: string; id: number | null } | { kind: "resync" };
export type LiveListener = (message: LiveMessage) => void;

/** The payload of a notification: `{"t": topic, "id": n}` (a few dozen bytes). */
export function livePayload(topic: string, id: number | null = null): string {
  return JSON.stringify({ t: topic, id });
}

/** NOTIFY inside the caller's transaction (delivered when it commits; dropped if it rolls back). */
export async function notifyLive(executor: { execute: (q: ReturnType<typeof sql>) => Promise<unknown> }, topic: string, id: number | null = null): Promise<void> {
  await executor.execute(sql`select pg_notify(${LIVE_CHANNEL}, ${livePayload(topic, id)})`);
}

export class LiveHub {
  private client: pg.Client | null = null;
  private readonly listeners = new Map<string, Set<LiveListener>>();
  private stopped = false;
  private started = false;
  private retryMs = 100;
  private retryTimer: NodeJS.Timeout | undefined;
  private readyWaiters: Array<() => void> = [];
  /** the server process id of the listening connection (for pg_terminate_backend in tests) */
  backendPid: number | null = null;
  /** how many times the connection has been made again after a loss */
  reconnects = 0;

  constructor(
    private readonly connectionString: string,
    private readonly applicationName = "lowstand-live",
  ) {}

  /** Connects and LISTENs (once; later calls wait for the same). Resolves when listening. */
  start(): Promise<void> {
    if (!this.started) {
      this.started = true;
      void this.connect(false);
    }
    return this.ready();
  }

  /** Resolves when the hub is listening (immediately if it is). */
  ready(): Promise<void> {
    if (this.client && this.backendPid !== null) return Promise.resolve();
    return new Promise((resolve) => this.readyWaiters.push(resolve));
  }

  get listening(): boolean {
    return this.client !== null && this.backendPid !== null;
  }

  /** Hears `topic` until the returned function is called. Also hears every resync. */
  subscribe(topic: string, listener: LiveListener): () => void {
    let set = this.listeners.get(topic);
    if (!set) this.listeners.set(topic, (set = new Set()));
    set.add(listener);
    return () => {
      set.delete(listener);
      if (set.size === 0 && this.listeners.get(topic) === set) this.listeners.delete(topic);
    };
  }

  /** How many listeners there are (all topics). */
  get listenerCount(): number {
    let n = 0;
    for (const s of this.listeners.values()) n += s.size;
    return n;
  }

  async stop(): Promise<void> {
    this.stopped = true;
    clearTimeout(this.retryTimer);
    const c = this.client;
    this.client = null;
    this.backendPid = null;
    if (c) await c.end().catch(() => undefined);
  }

  private async connect(isReconnect: boolean): Promise<void> {
    if (this.stopped) return;
    const c = new pg.Client({ connectionString: this.connectionString, application_name: this.applicationName, keepAlive: true });
    let lost = false;
    const onLost = (why: string) => {
      if (lost) return;
      lost = true;
      if (this.client === c) {
        this.client = null;
        this.backendPid = null;
      }
      c.end().catch(() => undefined);
      if (this.stopped) return;
      console.error(`[live] listening connection lost (${why}); reconnecting in ${this.retryMs} ms`);
      this.scheduleReconnect();
    };
    c.on("error", (err) => onLost(err.message));
    c.on("end", () => onLost("closed"));
    c.on("notification", (n) => {
      if (n.channel === LIVE_CHANNEL && n.payload) this.dispatch(n.payload);
    });
    try {
      await c.connect();
      const r = await c.query<{ pid: number }>("select pg_backend_pid() as pid");
      await c.query(`LISTEN ${LIVE_CHANNEL}`);
      if (lost || this.stopped) {
        await c.end().catch(() => undefined);
        return;
      }
      this.client = c;
      this.backendPid = r.rows[0].pid;
      this.retryMs = 100;
      if (isReconnect) {
        this.reconnects++;
        // Anything committed while we were not listening was not heard: everyone reads again.
        for (const set of [...this.listeners.values()]) for (const l of [...set]) this.safeCall(l, { kind: "resync" });
      }
      const waiters = this.readyWaiters;
      this.readyWaiters = [];
      for (const w of waiters) w();
    } catch (err) {
      onLost((err as Error).message);
    }
  }

  private scheduleReconnect() {
    clearTimeout(this.retryTimer);
    const wait = this.retryMs;
    this.retryMs = Math.min(this.retryMs * 2, 5_000);
    this.retryTimer = setTimeout(() => void this.connect(true), wait);
    this.retryTimer.unref?.();
  }

  private dispatch(payload: string) {
    let msg: { t?: unknown; id?: unknown };
    try {
      msg = JSON.parse(payload);
    } catch {
      return;
    }
    if (typeof msg.t !== "string") return;
    const set = this.listeners.get(msg.t);
    if (!set) return;
    const m: LiveMessage = { kind: "notify", topic: msg.t, id: typeof msg.id === "number" ? msg.id : null };
    for (const l of [...set]) this.safeCall(l, m);
  }

  private safeCall(l: LiveListener, m: LiveMessage) {
    try {
      l(m);
    } catch (err) {
      console.error("[live] listener failed:", err);
    }
  }
}

const g = globalThis as unknown as { lowstandLiveHub?: LiveHub };

/** This process's hub, started on first use (and kept across dev-server module reloads). */
export function liveHub(): LiveHub {
  if (!g.lowstandLiveHub) {
    const url = process.env.DATABASE_URL;
    if (!url) throw new Error("DATABASE_URL is not set: the live hub needs the database.");
    g.lowstandLiveHub = new LiveHub(url);
    void g.lowstandLiveHub.start();
  }
  return g.lowstandLiveHub;
}

/** Stops this process's hub (tests). */
export async function stopLiveHub(): Promise<void> {
  const h = g.lowstandLiveHub;
  g.lowstandLiveHub = undefined;
  if (h) await h.stop();
}

// ---------------------------------------------------------------------------------------------
// Server-sent events

/** Keep-alive comments every this many ms (a proxy or browser may drop a silent stream). */
export function keepAliveMs(): number {
  const v = Number(process.env.LOWSTAND_LIVE_KEEPALIVE_MS);
  return Number.isFinite(v) && v >= 50 ? v : 15_000;
}

const encoder = new TextEncoder();

/** One SSE event: optional id and event name, data as JSON on one line. */
export function sseEvent(data: unknown, opts: { id?: number; event?: string } = {}): string {
  return `${opts.id !== undefined ? `id: ${opts.id}\n` : ""}${opts.event ? `event: ${opts.event}\n` : ""}data: ${JSON.stringify(data)}\n\n`;
}

export interface SseSink {
  /** writes raw SSE text; false once the stream has ended */
  write(text: string): boolean;
  /** ends the stream (the client's EventSource will try again unless told otherwise) */
  close(): void;
  readonly closed: boolean;
}

/**
 * A `text/event-stream` response. `run` is called with the sink once the response starts and
 * returns its cleanup, called exactly once when the stream ends for any reason (the client went
 * away — `signal` — the sink was closed, or the stream was cancelled).
 */
export function sseResponse(signal: AbortSignal, run: (sink: SseSink) => Promise<() => Promise<void> | void>): Response {
  let cleanup: (() => Promise<void> | void) | null = null;
  let ended = false;
  let ctrl: ReadableStreamDefaultController<Uint8Array>;
  const end = () => {
    if (ended) return;
    ended = true;
    signal.removeEventListener("abort", end);
    try {
      ctrl.close();
    } catch {
      /* already closed */
    }
    const c = cleanup;
    cleanup = null;
    if (c) void Promise.resolve(c()).catch((err) => console.error("[live] stream cleanup failed:", err));
  };
  const sink: SseSink = {
    write(text) {
      if (ended) return false;
      try {
        ctrl.enqueue(encoder.encode(text));
        return true;
      } catch {
        end();
        return false;
      }
    },
    close: end,
    get closed() {
      return ended;
    },
  };
  const body = new ReadableStream<Uint8Array>({
    start(controller) {
      ctrl = controller;
      if (signal.aborted) return end();
      signal.addEventListener("abort", end);
      run(sink).then(
        (c) => {
          if (ended) void Promise.resolve(c()).catch(() => undefined);
          else cleanup = c;
        },
        (err) => {
          console.error("[live] stream failed to start:", err);
          end();
        },
      );
    },
    cancel() {
      end();
    },
  });
  return new Response(body, {
    headers: {
      "Content-Type": "text/event-stream; charset=utf-8",
      "Cache-Control": "no-cache, no-transform",
      Connection: "keep-alive",
      "X-Accel-Buffering": "no",
    },
  });
}
