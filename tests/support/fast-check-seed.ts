/**
 * Every property and fuzz test runs with one pinned fast-check seed, printed
 * at the start of each test file, so a failure in CI can be replayed exactly.
 * Set LOADLINE_FC_SEED to an integer to try another seed (or "random" for a
 * fresh one, which is printed too).
 */
import fc from 'fast-check';

/** The seed CI runs with. */
export const PINNED_FC_SEED = 20261203;

function chosenSeed(): number {
  const raw = process.env.LOADLINE_FC_SEED?.trim();
  if (!raw) return PINNED_FC_SEED;
  if (raw === 'random') return (Date.now() ^ (process.pid << 16)) | 0;
  const n = Number(raw);
  if (!Number.isInteger(n)) throw new Error(`LOADLINE_FC_SEED must be an integer or "random", not "${raw}"`);
  return n | 0;
}

export const FC_SEED = chosenSeed();
fc.configureGlobal({ ...fc.readConfigureGlobal(), seed: FC_SEED });
