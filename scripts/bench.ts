/**
 * `npm run bench`: every benchmark in turn: the model, the API under load and
 * the bench screen in headless Chromium. Each prints its figures beside its
 * goal, with the machine's noise stated.
 */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('..', import.meta.url));
const benches = [
  { name: 'model', file: 'scripts/bench-sim.ts' },
  { name: 'API', file: 'scripts/bench-api.ts' },
  { name: 'UI', file: 'scripts/bench-ui.ts' },
];

let failed = 0;
for (const b of benches) {
  console.log(`\n════ ${b.name} benchmark (${b.file}) ════`);
  if (!existsSync(join(root, b.file))) {
    console.log(`missing: ${b.file}`);
    failed += 1;
    continue;
  }
  const res = spawnSync(join(root, 'node_modules', '.bin', 'tsx'), [b.file], { cwd: root, stdio: 'inherit' });
  if (res.status !== 0) failed += 1;
}
process.exit(failed === 0 ? 0 : 1);
