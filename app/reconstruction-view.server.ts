// A reconstruction as pages and the API show it.
import type { getReconstruction } from "./reconstructions.server";
import { jobRunStatus } from "./jobs.server";

type Row = NonNullable<Awaited<ReturnType<typeof getReconstruction>>>;

export function reconstructionView(r: Row) {
  return {
    id: r.id,
    projectId: r.projectId,
    name: r.name,
    status: r.effectiveStatus,
    params: r.params,
    engineVersion: r.engineVersion,
    inputsHash: r.inputsHash,
    jobId: r.jobRunId,
    job: r.run ? jobRunStatus(r.run) : null,
    error: r.error ?? (r.effectiveStatus === "failed" ? (r.run?.message ?? null) : null),
    manifest: r.status === "published" ? r.manifest : null,
    createdAt: r.createdAt.toISOString(),
    publishedAt: r.publishedAt?.toISOString() ?? null,
  };
}
