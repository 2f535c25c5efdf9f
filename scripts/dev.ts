/**
 * `npm run dev`: the API (with its database, as `npm start` has it) and Vite with hot reload, together.
 * `npm run dev -- --lti-platform` (or LOADLINE_LTI_PLATFORM=1) also starts Quillmoor, the local LTI
 * platform (scripts/lti-platform.ts), registered with this Loadline.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('..', import.meta.url));
const bin = (name: string) => join(root, 'node_modules', '.bin', name);

const children: ChildProcess[] = [
  spawn(bin('tsx'), ['scripts/start.ts', '--api-only'], { cwd: root, stdio: 'inherit', env: { ...process.env, NODE_ENV: 'development' } }),
  spawn(bin('vite'), [], { cwd: root, stdio: 'inherit' }),
];
if (process.argv.includes('--lti-platform') || process.env.LOADLINE_LTI_PLATFORM === '1') {
  children.push(spawn(bin('tsx'), ['scripts/lti-platform.ts'], { cwd: root, stdio: 'inherit', env: { ...process.env, NODE_ENV: 'development' } }));
}

let stopping = false;
const stop = (code: number) => {
  if (stopping) return;
  stopping = true;
  for (const c of children) c.kill('SIGINT');
  setTimeout(() => process.exit(code), 3_000).unref();
};
for (const c of children) c.on('exit', (code) => stop(code ?? 0));
process.on('SIGINT', () => stop(0));
process.on('SIGTERM', () => stop(0));
