// The audit log: who did what to which project, when. Written in the same transaction as the change.
import { auditLog } from "./db/schema";
import type { Db } from "./db.server";

type Executor = Pick<Db, "insert">;

export interface AuditEntry {
  actorUserId: number | null;
  projectId?: number | null;
  action: string;
  detail?: Record<string, unknown>;
  clientAddress?: string;
}

export async function recordAudit(database: Executor, entry: AuditEntry): Promise<void> {
  await database.insert(auditLog).values({
    actorUserId: entry.actorUserId,
    projectId: entry.projectId ?? null,
    action: entry.action,
    detail: entry.detail ?? {},
    clientAddress: entry.clientAddress ?? "",
  });
}
