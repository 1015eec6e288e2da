// The session page's live connection: an EventSource on /live/weighing/:id that starts after the
// snapshot's last event, applies each numbered event to the snapshot, and lets the browser's own
// reconnection (with Last-Event-ID) catch up after a drop. `access` ends it (the page reloads its
// data: the member's role changed or they were removed); a closed session ends it for good.
import { useEffect, useRef, useState } from "react";
import { applyEvent, type SessionEvent, type SessionSnapshot } from "./session-state";

export type LiveState = "connecting" | "live" | "reconnecting" | "ended";

export function useSessionStream(initial: SessionSnapshot, onAccessChanged: () => void) {
  const [state, setState] = useState(initial);
  const [live, setLive] = useState<LiveState>(initial.session.status === "open" ? "connecting" : "ended");
  const startAfter = useRef(initial.lastSeq);
  const accessRef = useRef(onAccessChanged);
  accessRef.current = onAccessChanged;
  const open = initial.session.status === "open";
  const id = initial.session.id;

  useEffect(() => {
    if (!open) return;
    const es = new EventSource(`/live/weighing/${id}?after=${startAfter.current}`);
    es.onopen = () => setLive("live");
    es.onerror = () => setLive(es.readyState === EventSource.CLOSED ? "ended" : "reconnecting");
    es.onmessage = (m) => {
      const ev = JSON.parse(m.data) as SessionEvent;
      setState((s) => applyEvent(s, ev));
      if (ev.kind === "session.closed") {
        es.close();
        setLive("ended");
      }
    };
    es.addEventListener("presence", (m) => {
      const { present } = JSON.parse((m as MessageEvent).data) as { present: number[] };
      setState((s) => ({ ...s, present }));
    });
    es.addEventListener("access", () => {
      es.close();
      setLive("ended");
      accessRef.current();
    });
    return () => es.close();
  }, [id, open]);

  return { state, setState, live };
}
