// Every job kind the workers run: kind → definition. Each kind is also a queue in
// PRODUCT_QUEUES (jobs/boss.server.ts): the worker refuses a kind without a queue and warns
// about a queue without a kind (its jobs wait for a worker that has it).
import { testJobsEnabled } from "./boss.server";
import { testSleepJob } from "./test-sleep";
import { reconstructionJob } from "./reconstruction";
import { scoringJob } from "./scoring";
import { uncertaintyJob } from "./uncertainty";
import { modelJob } from "./model";
import type { JobDefinition } from "./wrapper";

export const JOB_REGISTRY: Record<string, JobDefinition<any>> = {
  [reconstructionJob.kind]: reconstructionJob,
  [scoringJob.kind]: scoringJob,
  [uncertaintyJob.kind]: uncertaintyJob,
  [modelJob.kind]: modelJob,
};

if (testJobsEnabled()) JOB_REGISTRY[testSleepJob.kind] = testSleepJob;
