// JSON calls from the session page to the session API (same origin, the session cookie).
export async function postJson<T>(url: string, body: unknown): Promise<{ ok: true; data: T } | { ok: false; message: string }> {
  try {
    const res = await fetch(url, { method: "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify(body), credentials: "same-origin" });
    const data = await res.json().catch(() => null);
    if (!res.ok) return { ok: false, message: (data as { error?: { message?: string } } | null)?.error?.message ?? `The server answered ${res.status}.` };
    return { ok: true, data: data as T };
  } catch {
    return { ok: false, message: "The server could not be reached. Check the connection and try again." };
  }
}
