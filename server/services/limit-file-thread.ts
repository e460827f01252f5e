import { parentPort } from 'node:worker_threads';
import type { ThreadAnswer, ThreadMessage } from '../lib/thread-pool';
import { readLimitFile, type FileJob, type FileReading } from './limit-file';

/** The upload reader's worker thread (see result-upload.ts): one file at a time, answered by id (its priority is lowered in limit-file-thread-boot.cjs). */

parentPort?.on('message', ({ id, job }: ThreadMessage<FileJob>) => {
  let answer: ThreadAnswer<FileReading>;
  try {
    answer = { id, answer: readLimitFile(job) };
  } catch (e) {
    answer = { id, error: e instanceof Error ? e.message : String(e) };
  }
  parentPort!.postMessage(answer);
});
