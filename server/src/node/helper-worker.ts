/** Helper-thread entry (helper-thread.ts): one job per message, answered through shared memory. */
import { parentPort } from 'node:worker_threads';
import { runPairJob, type PairJob } from './pair-build';
import { runReadJob, type ReadJob } from './file-stream';

parentPort?.on('message', (job: PairJob | ReadJob) => {
  if (job.kind === 'pair') runPairJob(job);
  else if (job.kind === 'read') runReadJob(job);
});
