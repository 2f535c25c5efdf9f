/** Runs one command inside a throwaway test cluster, e.g. `tsx scripts/with-test-db.ts vitest run -c vitest.integration.config.ts`. */
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { withTestCluster } from './test-cluster.ts';

const [cmd, ...args] = process.argv.slice(2);
if (!cmd) {
  console.error('usage: tsx scripts/with-test-db.ts <command> [args…]');
  process.exit(2);
}
const root = fileURLToPath(new URL('..', import.meta.url));
const local = join(root, 'node_modules', '.bin', cmd);
const status = await withTestCluster((env) => spawnSync(local, args, { stdio: 'inherit', env, cwd: root }).status ?? 1);
process.exit(status);
