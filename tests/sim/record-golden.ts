/**
 * Records the golden runs' digests and checkpoints from the model as it
 * stands: `npx tsx tests/sim/record-golden.ts`. Writes the digests into
 * golden-runs.test.ts and the checkpoints into golden-checkpoints.json, and
 * prints each digest that changed. Only for a change meant to alter the
 * model's behaviour (its commit says why); work meant only for speed must
 * leave every digest as it is and records nothing.
 *
 * To find the very step where a run departs, compare two models by hand
 * with checkpoints finer than the recorded 10 s (nothing in the tests changes):
 *   in a checkout of the earlier model:
 *     npx tsx tests/sim/record-golden.ts --every-ms 10 --only "<run name>" --to <file>
 *   then with the model to check:
 *     npx tsx tests/sim/record-golden.ts --compare <file>
 * With --every-ms 10 each window is one step of the replay (DT_MS).
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import * as detMath from '../../sim/det-math';
import { digestMathParts, goldenDigests } from './golden';
import { CHECKPOINT_EVERY_MS, locateDifference, readCheckpoints, type RunCheckpoints, type StoredCheckpoints } from './golden-locate';

const { values: opts } = parseArgs({
  options: {
    'every-ms': { type: 'string' },
    only: { type: 'string', multiple: true },
    to: { type: 'string' },
    compare: { type: 'string' },
  },
});

const testFile = new URL('./golden-runs.test.ts', import.meta.url);
const checkpointsFile = new URL('./golden-checkpoints.json', import.meta.url);
const math = digestMathParts(detMath);

/** The checkpoints as stored: the fields most runs tag written once, a run that tags others listing its own. */
function stored(everyMs: number, runs: Record<string, { checkpoints: RunCheckpoints }>): StoredCheckpoints {
  const fields = Object.values(runs)[0]?.checkpoints.fields ?? [];
  return {
    everyMs,
    fields,
    math: math.byFunction,
    runs: Object.fromEntries(
      Object.entries(runs).map(([name, { checkpoints: c }]) => [name, JSON.stringify(c.fields) === JSON.stringify(fields) ? { windows: c.windows, parts: c.parts } : c]),
    ),
  };
}

if (opts.compare) {
  // Compare the model here with checkpoints recorded elsewhere, run by run.
  const other = readCheckpoints(opts.compare);
  const names = Object.keys(other.runs);
  const now = goldenDigests(other.everyMs, (name) => names.includes(name));
  for (const name of names) {
    const where = now[name] ? locateDifference(other.runs[name], now[name].checkpoints, other.everyMs) : 'no such run here';
    console.log(`${name}: ${where ?? 'the same at every checkpoint'}`);
  }
  const mathDiffers = Object.keys(math.byFunction).filter((f) => math.byFunction[f] !== other.math[f]);
  console.log(`elementary functions: ${mathDiffers.length ? `${mathDiffers.join(', ')} differ` : 'the same'}`);
} else if (opts['every-ms'] || opts.only || opts.to) {
  // Checkpoints only, to a file of one's choosing: the recorded digests and checkpoints stay as they are.
  if (!opts.to) throw new Error('--every-ms and --only record checkpoints to a file: give it with --to <file>');
  const everyMs = Number(opts['every-ms'] ?? CHECKPOINT_EVERY_MS);
  if (!Number.isInteger(everyMs) || everyMs <= 0) throw new Error(`--every-ms must be a whole number of milliseconds, not ${opts['every-ms']}`);
  const runs = goldenDigests(everyMs, opts.only ? (name) => opts.only!.includes(name) : undefined);
  if (opts.only) for (const name of opts.only) if (!runs[name]) throw new Error(`no golden run is named "${name}"`);
  writeFileSync(opts.to, `${JSON.stringify(stored(everyMs, runs))}\n`);
  console.log(`checkpoints of ${Object.keys(runs).length} runs every ${everyMs} ms written to ${opts.to}`);
} else {
  const runs = goldenDigests();
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
  writeFileSync(checkpointsFile, `${JSON.stringify(stored(CHECKPOINT_EVERY_MS, runs), null, 1)}\n`);

  const changed = Object.entries(runs).filter(([name, r]) => was.get(name) !== r.digest);
  if (beforeMath[2] !== math.digest) console.log(`the elementary functions: ${beforeMath[2]} -> ${math.digest}`);
  for (const [name, r] of changed) console.log(`${name}: ${was.get(name) ?? '(new)'} -> ${r.digest}`);
  for (const name of was.keys()) if (!(name in runs)) console.log(`${name}: no longer run`);
  console.log(`${changed.length} of ${Object.keys(runs).length} run digests changed; checkpoints written to golden-checkpoints.json`);
}
