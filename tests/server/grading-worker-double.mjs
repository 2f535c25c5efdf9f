// A stand-in grading worker for the pool's tests: it loads and warms up at
// once and answers every job with a fixed result, except that a submission at
// 1 ms makes it exit, one at 2 ms makes it never answer, and one at 3 ms makes
// it report a 409. Batches sent ahead are ignored.
import process from 'node:process';
import { parentPort } from 'node:worker_threads';

parentPort.postMessage({ kind: 'loaded' });
parentPort.postMessage({ kind: 'ready', warmUpMs: 0 });
parentPort.on('message', ({ kind, id, job }) => {
  if (kind !== 'grade') return;
  const atMs = job.submission.atMs;
  if (atMs === 1) process.exit(3);
  if (atMs === 2) return;
  if (atMs === 3) parentPort.postMessage({ kind: 'failed', id, message: 'refused by the stand-in', status: 409, details: { field: 'atMs' } });
  else parentPort.postMessage({ kind: 'done', id, result: { grade: 42, stand: 'in' }, ms: 0 });
});
