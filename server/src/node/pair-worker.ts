/** Helper-thread entry of pair-build.ts: one job per message, answered through shared memory. */
import { parentPort } from 'node:worker_threads';
import { runPairJob, type PairJob } from './pair-build';

parentPort?.on('message', (job: PairJob) => runPairJob(job));
