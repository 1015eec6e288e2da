// Turning what server modules throw into responses: a UserError becomes a 4xx with its message
// (pages get it as action data to show beside the form; the API gets { error: { code, message } }).
import { data } from "react-router";
import { UserError } from "./errors";
import { apiError } from "./security.server";
import type { z } from "zod";

export interface FormProblem {
  error: string;
  field?: string;
}

/** For page actions: runs `fn`; a UserError or a zod failure comes back as data with a 4xx status. */
export async function formAction<T>(fn: () => Promise<T>) {
  try {
    return await fn();
  } catch (e) {
    if (e instanceof UserError) return data<FormProblem>({ error: e.message, field: e.field }, { status: e.status });
    throw e;
  }
}

/** For API routes: runs `fn`; a UserError becomes the API's error shape with its status. */
export async function apiAction(fn: () => Promise<Response>): Promise<Response> {
  try {
    return await fn();
  } catch (e) {
    if (e instanceof UserError) return apiError(e.status, e.code, e.message);
    throw e;
  }
}

/** Parses form fields with a zod schema, throwing a UserError (422) naming the first problem. */
export function parseForm<S extends z.ZodType>(schema: S, form: FormData | Record<string, unknown>): z.infer<S> {
  const obj = form instanceof FormData ? Object.fromEntries([...form.entries()].filter(([, v]) => typeof v === "string")) : form;
  const r = schema.safeParse(obj);
  if (!r.success) {
    const issue = r.error.issues[0];
    throw new UserError(422, "invalid_fields", issue.message, issue.path.join(".") || undefined);
  }
  return r.data;
}

export function methodNotAllowed(allowed: string[]): Response {
  return apiError(405, "method_not_allowed", `Use ${allowed.join(" or ")} here.`, { Allow: allowed.join(", ") });
}
