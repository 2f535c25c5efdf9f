/**
 * The golden runs' locator (golden-locate.ts): a run changed from a known
 * moment is found to depart in the checkpoint window that holds that moment,
 * in the fields the change touches, and nowhere earlier.
 */
import { describe, expect, it } from 'vitest';
import { DT_MS } from '../../sim/step';
import { digestRun, goldenRuns } from './golden';
import { CHECKPOINT_EVERY_MS, locateDifference, type RunCheckpoints } from './golden-locate';

describe('where a golden run first differs', () => {
  const base = goldenRuns().find((r) => r.name === 'a regulator sensing B+')!;
  const recorded = digestRun(base);

  it('finds nothing when the run is as recorded', () => {
    expect(locateDifference(recorded.checkpoints, digestRun(base).checkpoints)).toBeNull();
  });

  it('names the window of sim time and the fields where a run changed from 25 s on first departs', () => {
    // The pile turned up at 25 s (the run next sets it at 26 s): the controls change there and the electrical state follows.
    const changed = digestRun({ ...base, events: [...base.events, { kind: 'pile', atMs: 25_000, dial01: 0.3 }] });
    expect(changed.digest).not.toBe(recorded.digest);
    const where = locateDifference(recorded.checkpoints, changed.checkpoints)!;
    const from = Math.floor(25_000 / CHECKPOINT_EVERY_MS) * CHECKPOINT_EVERY_MS;
    expect(where).toMatch(new RegExp(`^first differs between ${from / 1000} s and ${(from + CHECKPOINT_EVERY_MS) / 1000} s of sim time \\(earlier windows agree\\), in \\d+ of \\d+ fields`));
    expect(where).toMatch(/\bcontrols\b/);
    expect(where).toMatch(/\bnet\.branchA\b/);
    // What the pile cannot touch is not named: the key, the ammeter's fuses.
    expect(where).not.toMatch(/\blastKey\b|\bammeterFusesSeen\b/);
  });

  it('with windows of one step, names the very step where the run departs', () => {
    // The pile event at 25 s takes effect in the step that starts there: the state after it, at 25.01 s, is the first to differ.
    const changedRun = { ...base, events: [...base.events, { kind: 'pile' as const, atMs: 25_000, dial01: 0.3 }] };
    const where = locateDifference(digestRun(base, DT_MS).checkpoints, digestRun(changedRun, DT_MS).checkpoints, DT_MS)!;
    expect(where).toMatch(/^first differs between 25\.01 s and 25\.02 s of sim time \(earlier windows agree\), in \d+ of \d+ fields/);
    expect(where).toMatch(/\bcontrols\b/);
  });

  it('names a single field alone, a changed run length, changed fields and parts', () => {
    const fields = ['timeMs', 'batterySoc01', 'pileTempC'];
    const was: RunCheckpoints = { fields, windows: ['000a000b000c', '001a001b001c', '002a002b002c'], parts: 'aaaabbbbccccdddd' };
    expect(locateDifference(was, { ...was, windows: ['000a000b000c', '001a001b001c', '002a00ff002c'] })).toBe('first differs between 20 s and 30 s of sim time (earlier windows agree), in the field batterySoc01 alone');
    expect(locateDifference(was, { ...was, windows: was.windows.slice(0, 2) })).toBe('the run now ends at 20 s of sim time (recorded: 3 windows of 10 s)');
    expect(locateDifference(was, { ...was, parts: 'aaaabbbbcccc0000' })).toBe("every step's state agrees; the run's output curves differ");
    expect(locateDifference(was, { fields: [...fields, 'newField'], windows: was.windows.map((w) => `${w}0001`), parts: was.parts })).toBe("the state's fields changed: new newField");
    expect(locateDifference(undefined, was)).toMatch(/^no checkpoints are recorded/);
  });
});
