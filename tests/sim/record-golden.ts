/**
 * Records the golden runs' digests and checkpoints from the model as it
 * stands: `npx tsx tests/sim/record-golden.ts`. Writes the digests into
 * golden-runs.test.ts and the checkpoints into golden-checkpoints.json, and
 * prints each digest that changed. Only for a change meant to alter the
 * model's behaviour (its commit says why); work meant only for speed must
 * leave every digest as it is and records nothing.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import * as detMath from '../../sim/det-math';
import { digestMathParts, goldenDigests } from './golden';
import { CHECKPOINT_EVERY_MS, type StoredCheckpoints } from './golden-locate';

const testFile = new URL('./golden-runs.test.ts', import.meta.url);
const checkpointsFile = new URL('./golden-checkpoints.json', import.meta.url);

const runs = goldenDigests();
const math = digestMathParts(detMath);

let source = readFileSync(testFile, 'utf8');
const table = /(const GOLDEN: Readonly<Record<string, string>> = \{\n)([\s\S]*?)(\n\};)/;
const mathLine = /(const GOLDEN_MATH = ')([0-9a-f]{64})(';)/;
const before = table.exec(source);
const beforeMath = mathLine.exec(source);
if (!before || !beforeMath) throw new Error('golden-runs.test.ts no longer has the GOLDEN table and GOLDEN_MATH line this script rewrites');
const was = new Map([...before[2]!.matchAll(/^ {2}'(.*)': '([0-9a-f]{64})',$/gm)].map((m) => [m[1]!.replace(/\\'/g, "'"), m[2]!]));

const rows = Object.entries(runs).map(([name, r]) => `  '${name.replace(/'/g, "\\'")}': '${r.digest}',`);
source = source.replace(table, (_all, open: string, _rows: string, close: string) => `${open}${rows.join('\n')}${close}`);
source = source.replace(mathLine, (_all, open: string, _digest: string, close: string) => `${open}${math.digest}${close}`);
writeFileSync(testFile, source);

// The fields most runs tag are written once; a run that tags others lists its own.
const fields = Object.values(runs)[0]!.checkpoints.fields;
const checkpoints: StoredCheckpoints = {
  everyMs: CHECKPOINT_EVERY_MS,
  fields,
  math: math.byFunction,
  runs: Object.fromEntries(
    Object.entries(runs).map(([name, { checkpoints: c }]) => [name, JSON.stringify(c.fields) === JSON.stringify(fields) ? { windows: c.windows, parts: c.parts } : c]),
  ),
};
writeFileSync(checkpointsFile, `${JSON.stringify(checkpoints, null, 1)}\n`);

const changed = Object.entries(runs).filter(([name, r]) => was.get(name) !== r.digest);
if (beforeMath[2] !== math.digest) console.log(`the elementary functions: ${beforeMath[2]} -> ${math.digest}`);
for (const [name, r] of changed) console.log(`${name}: ${was.get(name) ?? '(new)'} -> ${r.digest}`);
for (const name of was.keys()) if (!(name in runs)) console.log(`${name}: no longer run`);
console.log(`${changed.length} of ${Object.keys(runs).length} run digests changed; checkpoints written to golden-checkpoints.json`);
