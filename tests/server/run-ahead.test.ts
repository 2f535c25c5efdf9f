/**
 * Running attempts ahead of their submission (server/grading/run-ahead.ts):
 * an attempt run ahead batch by batch, in slices of any size and interleaved
 * with other attempts, then carried on to its submission, gives exactly the
 * samples, end state and result of re-running it from the start; a re-run
 * that the submission's own log does not bear out is never used; memory
 * stays within its budget. Pure: no database, no worker.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { FaultKind } from '../../sim/faults.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import { readMeters } from '../../sim/instruments.ts';
import { advance, orderEvents, startPoint } from '../../sim/replay.ts';
import { DT_MS } from '../../sim/step.ts';
import { DISPLAY_TICK_MS } from '../../shared/meter-display.ts';
import { setupSampleOf } from '../../shared/test-setups.ts';
import { carryRerun, finishRerun, rerunAttempt, SAMPLE_BYTES, SampleLog, startRerun } from '../../server/grading/rerun.ts';
import { gradeRun, warmUpJob, type GradeJob } from '../../server/grading/grade-run.ts';
import { RunAhead, sameData, type AheadFeed } from '../../server/grading/run-ahead.ts';
import { compileCar } from '../../sim/compiled-car.ts';

const MB = 1024 * 1024;

/** A student's log: leads on, engine started, then random moves at increasing times (some at the same ms). */
const logArb = fc
  .array(
    fc.tuple(
      fc.oneof(fc.constant(0), fc.integer({ min: 1, max: 4000 })),
      fc.oneof(
        fc.record({ kind: fc.constant('rpm' as const), rpm: fc.constantFrom(700, 1500, 2000, 2500) }),
        fc.record({ kind: fc.constant('pile' as const), dial01: fc.double({ min: 0, max: 1, noNaN: true }) }),
        fc.record({ kind: fc.constant('accessory' as const), id: fc.constantFrom('headlamps', 'blower', 'rear-defrost'), on: fc.boolean() }),
        fc.record({
          kind: fc.constant('clamp' as const),
          conductor: fc.constantFrom('bplus-cable' as const, 'battery-neg-cable' as const, null),
          arrow: fc.constantFrom('toward-battery' as const, 'toward-alternator' as const),
        }),
        fc.record({ kind: fc.constant('lead' as const), which: fc.constant('red' as const), point: fc.constantFrom('battery-pos' as const, 'alt-bplus' as const) }),
        fc.record({ kind: fc.constant('key' as const), position: fc.constantFrom('on' as const, 'off' as const, 'start' as const) }),
        fc.record({ kind: fc.constant('clamp-zero' as const) }),
      ),
    ),
    { minLength: 1, maxLength: 40 },
  )
  .map((moves) => {
    const events: InputEvent[] = [
      { kind: 'lead', atMs: 0, which: 'red', point: 'battery-pos' },
      { kind: 'lead', atMs: 0, which: 'black', point: 'battery-neg' },
      { kind: 'key', atMs: 1000, position: 'start' },
      { kind: 'key', atMs: 2200, position: 'on' },
    ];
    let t = 2200;
    for (const [gap, move] of moves) {
      t += gap;
      events.push({ ...move, atMs: t } as InputEvent);
    }
    return events;
  });

const FAULTS: readonly FaultKind[] = ['diode-open', 'belt-slip', 'regulator-set-high', 'bplus-high-resistance'];

/** A job on the blank scenario with a fault, the given log and a submission `tailMs` after its last event. */
function jobFor(log: InputEvent[], fault: FaultKind, seed: number, tailMs: number, attemptId = 1): GradeJob {
  const job = warmUpJob(60);
  job.definition.faults = [{ id: 'f', kind: fault, severity01: 0.7, onsetS: 0, intermittent: null }];
  job.faults = job.definition.faults;
  job.car = compileCar(job.definition.vehicle.params, job.definition.faults, job.definition.vehicle.name);
  job.events = [...log];
  job.seed = seed;
  job.attemptId = attemptId;
  const last = log.at(-1)!.atMs;
  const tick = (ms: number) => Math.floor(ms / 100) * 100;
  job.submission = { ...job.submission, atMs: last + tailMs };
  job.readings = [
    { id: 'v', test: 'regulated-voltage', quantity: 'voltage', value: 14.2, unit: 'V', atMs: tick(Math.max(0, last - 500)), where: 'battery posts' },
    { id: 'a', test: 'output', quantity: 'current', value: 40, unit: 'A', atMs: tick(last), where: 'B+ cable' },
  ];
  return job;
}

/** The job's log as stored batches (cut at `cuts`), each as the events route sends it ahead. */
function feedsFor(job: GradeJob, cuts: number[]): AheadFeed[] {
  const log = job.events;
  const bounds = [...new Set([0, ...cuts.map((c) => c % (log.length + 1)), log.length])].sort((a, b) => a - b);
  const feeds: AheadFeed[] = [];
  for (let i = 0; i + 1 < bounds.length; i++) {
    const from = bounds[i]!;
    feeds.push({
      attemptId: job.attemptId!,
      seed: job.seed,
      fromSeq: from,
      toSeq: bounds[i + 1]!,
      // Copied as a worker receives them, so nothing is shared with the job.
      events: structuredClone(log.slice(from, bounds[i + 1])),
      ...(from === 0 ? { start: structuredClone({ car: job.car }) } : {}),
    });
  }
  return feeds;
}

const claimOf = (job: GradeJob) => ({ attemptId: job.attemptId!, car: job.car, seed: job.seed, events: job.events, atMs: job.submission.atMs });
const rerunOf = (job: GradeJob, events: readonly InputEvent[], untilMs: number) => rerunAttempt(job.car.params, job.seed, events, untilMs, job.car.changes);

describe('an attempt run ahead', () => {
  it('gives the samples, end state and grade of a re-run from the start, however its batches and slices fall', () => {
    fc.assert(
      fc.property(
        logArb,
        logArb,
        fc.constantFrom(...FAULTS),
        fc.integer({ min: 0, max: 2 ** 31 - 1 }),
        fc.array(fc.nat(), { maxLength: 6 }),
        fc.array(fc.integer({ min: 1, max: 80 }), { minLength: 1, maxLength: 12 }),
        fc.integer({ min: 0, max: 3000 }),
        (log, otherLog, fault, seed, cuts, slices, tailMs) => {
          const job = jobFor(log, fault, seed, tailMs, 1);
          const other = jobFor(otherLog, 'battery-weak', seed + 1, 0, 2);
          const ahead = new RunAhead(64 * MB);
          const feeds = feedsFor(job, cuts);
          const otherFeeds = feedsFor(other, [3]);
          // Batches of the two attempts interleaved, with slices of work of varied size between them.
          for (let i = 0; i < Math.max(feeds.length, otherFeeds.length); i++) {
            if (feeds[i]) ahead.feed(feeds[i]!);
            ahead.work(slices[i % slices.length]!);
            if (otherFeeds[i]) ahead.feed(otherFeeds[i]!);
            ahead.work(slices[(i + 1) % slices.length]!);
          }
          const cursor = ahead.take(claimOf(job));
          expect(cursor).not.toBeNull();
          const aheadTo = cursor!.point.state.timeMs;
          // It had got as far as the sample boundary at or before the last event.
          expect(aheadTo).toBe(Math.floor(log.at(-1)!.atMs / DISPLAY_TICK_MS) * DISPLAY_TICK_MS);
          const fromStart = rerunOf(job, job.events, job.submission.atMs);
          const carried = finishRerun(cursor!, job.submission.atMs);
          expect(carried.samples).toEqual(fromStart.samples);
          expect(carried.final).toEqual(fromStart.final);
          // The other attempt is still held and is still right.
          const otherCursor = ahead.take(claimOf(other));
          expect(otherCursor).not.toBeNull();
          expect(finishRerun(otherCursor!, other.submission.atMs).samples).toEqual(rerunOf(other, other.events, other.submission.atMs).samples);
          expect(ahead.stats()).toMatchObject({ attempts: 0, bytes: 0 });
        },
      ),
      { numRuns: 30 },
    );
  });

  it('grades a job exactly as the re-run from the start does', () => {
    const log: InputEvent[] = [
      { kind: 'lead', atMs: 0, which: 'red', point: 'battery-pos' },
      { kind: 'lead', atMs: 0, which: 'black', point: 'battery-neg' },
      { kind: 'key', atMs: 1000, position: 'start' },
      { kind: 'key', atMs: 2200, position: 'on' },
      { kind: 'clamp', atMs: 3000, conductor: 'bplus-cable', arrow: 'toward-alternator' },
      { kind: 'rpm', atMs: 5000, rpm: 2000 },
      ...Array.from({ length: 30 }, (_, k): InputEvent => ({ kind: 'pile', atMs: 8000 + k * 700, dial01: k / 30 })),
      { kind: 'pile', atMs: 40_000, dial01: 0 },
    ];
    const job = jobFor(log, 'diode-open', 99, 1234);
    const ahead = new RunAhead(64 * MB);
    for (const f of feedsFor(job, [5, 12, 20, 33])) {
      ahead.feed(f);
      while (ahead.work(17));
    }
    const cursor = ahead.take(claimOf(job));
    expect(cursor!.point.state.timeMs).toBe(40_000);
    const result = gradeRun(job, cursor);
    expect(result).toEqual(gradeRun(job));
    // A result with something in it: the reversed clamp is found from the carried samples.
    expect(result.mistakes.map((m) => m.kind)).toContain('reversed-clamp');
  });

  it('is not used when the submission’s log, seed or car differ from what it ran over, or it ran past the submission', () => {
    const log: InputEvent[] = [
      { kind: 'lead', atMs: 0, which: 'red', point: 'battery-pos' },
      { kind: 'key', atMs: 1000, position: 'start' },
      { kind: 'key', atMs: 2200, position: 'on' },
      { kind: 'rpm', atMs: 6000, rpm: 2000 },
      { kind: 'pile', atMs: 9000, dial01: 0.5 },
    ];
    const job = jobFor(log, 'belt-slip', 5, 500);
    const runAheadOf = (j: GradeJob) => {
      const ahead = new RunAhead(64 * MB);
      for (const f of feedsFor(j, [2])) ahead.feed(f);
      while (ahead.work(50));
      return ahead;
    };
    const changed = structuredClone(job);
    (changed.events[3] as { rpm: number }).rpm = 2100; // a logged event that is not what ran
    expect(runAheadOf(job).take(claimOf(changed))).toBeNull();
    expect(runAheadOf(job).take({ ...claimOf(job), seed: 6 })).toBeNull();
    const otherCar = structuredClone(job.car);
    otherCar.params.belt.pulleyRatio += 0.1;
    expect(runAheadOf(job).take({ ...claimOf(job), car: otherCar })).toBeNull();
    const otherSchedule = structuredClone(job.car);
    otherSchedule.changes.push({ id: 'c1', onsetS: 5, intermittent: null, ops: [{ path: 'wiring.bplusExtraOhm', op: 'add', value: 0.01 }] });
    expect(runAheadOf(job).take({ ...claimOf(job), car: otherSchedule })).toBeNull();
    // A later event earlier in sim time than the run had got to.
    expect(runAheadOf(job).take({ ...claimOf(job), events: [...job.events, { kind: 'rpm', atMs: 8000, rpm: 0 }] })).toBeNull();
    // A submission before the point the run reached.
    expect(runAheadOf(job).take({ ...claimOf(job), atMs: 8000 })).toBeNull();
    // Fewer events than it ran over.
    expect(runAheadOf(job).take({ ...claimOf(job), events: job.events.slice(0, -1) })).toBeNull();
    // Later events at or after its last are the usual case and are taken.
    const more = [...job.events, { kind: 'rpm' as const, atMs: 9000, rpm: 0 }, { kind: 'key' as const, atMs: 9500, position: 'off' as const }];
    const cursor = runAheadOf(job).take({ ...claimOf(job), events: more, atMs: 10_000 });
    expect(cursor).not.toBeNull();
    expect(finishRerun(cursor!, 10_000).samples).toEqual(rerunOf(job, more, 10_000).samples);
  });

  it('drops an attempt whose batches leave a gap, go back in sim time or change seed, and starts again from seq 1', () => {
    const log: InputEvent[] = [
      { kind: 'lead', atMs: 0, which: 'red', point: 'battery-pos' },
      { kind: 'key', atMs: 1000, position: 'start' },
      { kind: 'key', atMs: 2200, position: 'on' },
      { kind: 'rpm', atMs: 6000, rpm: 2000 },
    ];
    const job = jobFor(log, 'belt-slip', 5, 0);
    const [first, second] = feedsFor(job, [2]);
    const held = () => {
      const ahead = new RunAhead(64 * MB);
      ahead.feed(first!);
      return ahead;
    };
    const gap = held();
    gap.feed({ ...second!, fromSeq: 3 });
    expect(gap.stats().attempts).toBe(0);
    const back = held();
    back.feed({ ...second!, events: [{ kind: 'rpm', atMs: 500, rpm: 2000 }] });
    expect(back.stats().attempts).toBe(0);
    const reseeded = held();
    reseeded.feed({ ...second!, seed: 6 });
    expect(reseeded.stats().attempts).toBe(0);
    // A batch from seq 1 again replaces what was held.
    const again = held();
    again.feed(second!);
    again.feed(first!);
    again.feed(second!);
    expect(again.take(claimOf(job))).not.toBeNull();
  });

  it('stays within its memory budget, dropping the attempts fed longest ago', () => {
    const tenMinutes = (id: number): GradeJob => {
      const log: InputEvent[] = [
        { kind: 'lead', atMs: 0, which: 'red', point: 'battery-pos' },
        { kind: 'key', atMs: 1000, position: 'start' },
        { kind: 'key', atMs: 2200, position: 'on' },
        { kind: 'rpm', atMs: 600_000, rpm: 2000 },
      ];
      return jobFor(log, 'belt-slip', id, 0, id);
    };
    // 6,000 samples of 10 minutes take about 0.7 MB (the log grows by doubling, so a little more is held).
    const budget = 1.2 * MB;
    const ahead = new RunAhead(budget);
    for (const id of [1, 2, 3, 4]) {
      for (const f of feedsFor(tenMinutes(id), [])) ahead.feed(f);
      while (ahead.work(500));
      expect(ahead.stats().bytes).toBeLessThanOrEqual(budget);
    }
    const stats = ahead.stats();
    expect(stats.evicted).toBeGreaterThan(0);
    expect(stats.attempts).toBeLessThan(4);
    expect(stats.bytes).toBeGreaterThan(6000 * SAMPLE_BYTES);
    // The latest is held; the first was dropped.
    expect(ahead.take(claimOf(tenMinutes(4)))).not.toBeNull();
    expect(ahead.take(claimOf(tenMinutes(1)))).toBeNull();
    // No budget: nothing is held.
    const none = new RunAhead(0);
    for (const f of feedsFor(tenMinutes(1), [])) none.feed(f);
    expect(none.stats().attempts).toBe(0);
  });
});

describe('the re-run’s samples', () => {
  it('keep exactly what the meters showed, every 100 ms and at the end', () => {
    const job = jobFor(
      [
        { kind: 'lead', atMs: 0, which: 'red', point: 'battery-pos' },
        { kind: 'lead', atMs: 0, which: 'black', point: 'battery-neg' },
        { kind: 'ammeter', atMs: 500, inSeries: true },
        { kind: 'key', atMs: 1000, position: 'start' },
        { kind: 'key', atMs: 2200, position: 'on' },
        { kind: 'clamp', atMs: 3000, conductor: 'bplus-cable', arrow: 'toward-battery' },
        { kind: 'rpm', atMs: 4000, rpm: 2000 },
        { kind: 'pile', atMs: 5000, dial01: 1 },
      ],
      'diode-shorted',
      3,
      40_000,
    );
    const params = job.car.params;
    const untilMs = job.submission.atMs + 37; // ends between two sample times
    const { samples } = rerunOf(job, job.events, untilMs);
    // The same moments read straight off the model.
    const ordered = orderEvents(job.events);
    let point = startPoint(params, job.seed, job.car.changes);
    const direct = [point];
    const total = Math.floor(untilMs / DT_MS);
    for (let done = 0; done < total; ) {
      const n = Math.min(DISPLAY_TICK_MS / DT_MS, total - done);
      point = advance(params, point, ordered, n);
      done += n;
      direct.push(point);
    }
    expect(samples.map((s) => s.atMs)).toEqual(direct.map((p) => p.state.timeMs));
    expect(samples.at(-1)!.atMs).toBe(Math.floor(untilMs / DT_MS) * DT_MS);
    samples.forEach((s, i) => {
      const r = readMeters(params, direct[i]!.state);
      expect(s.readings).toEqual({
        voltmeterV: r.voltmeterV,
        rippleVac: r.rippleVac,
        clampA: r.clampA,
        ammeterA: r.ammeterA,
        pileA: r.pileA,
        tachRpm: r.tachRpm,
        batterySoc01: r.batterySoc01,
        engine: r.engine,
        pileOverheated: r.pileOverheated,
      });
      expect(s.setup).toEqual(setupSampleOf(params, direct[i]!.state, r));
      expect(s.linkBurnt).toBe(direct[i]!.state.fusibleLinkBlown);
      expect(s.linkHeat01).toBe(direct[i]!.state.fusibleLinkHeat01);
      expect(s.bplusConnected).toBe(direct[i]!.state.controls.bplusConnected);
    });
    // Some of each kind of value: nulls (a meter not connected at 0 ms) and numbers, several engine states, the clamp on and off.
    expect(samples[0]!.readings.clampA).toBeNull();
    expect(samples.some((s) => s.readings.ammeterA !== null)).toBe(true);
    expect(new Set(samples.map((s) => s.readings.engine)).size).toBeGreaterThan(1);
    expect(new Set(samples.map((s) => s.setup.clampOn))).toEqual(new Set([null, 'bplus-cable']));
  });

  it('grow past their first capacity and report the memory they hold', () => {
    const log = new SampleLog(2);
    expect(log.bytes).toBe(2 * SAMPLE_BYTES);
    const c = startRerun(warmUpJob(1).definition.vehicle.params, 1, []);
    carryRerun(c, 1000);
    expect(c.log.length).toBe(11);
    expect(c.log.toSamples().at(-1)!.atMs).toBe(1000);
    expect(c.log.bytes).toBeGreaterThanOrEqual(11 * SAMPLE_BYTES);
  });

  it('can be carried on only from a sample boundary', () => {
    const c = startRerun(warmUpJob(1).definition.vehicle.params, 1, []);
    carryRerun(c, 1050);
    expect(c.point.state.timeMs).toBe(1050);
    expect(() => carryRerun(c, 2000)).toThrow(/sample boundary/);
    // A piece bounded by its sample count stops on a boundary and says it has not arrived.
    const d = startRerun(warmUpJob(1).definition.vehicle.params, 1, []);
    expect(carryRerun(d, 5000, 3)).toBe(false);
    expect(d.point.state.timeMs).toBe(300);
    expect(carryRerun(d, 5000)).toBe(true);
  });
});

describe('comparing stored events', () => {
  it('ignores key order and keys set to undefined, and nothing else', () => {
    expect(sameData({ kind: 'pile', atMs: 1, dial01: 0.5 }, { dial01: 0.5, atMs: 1, kind: 'pile' })).toBe(true);
    expect(sameData({ a: 1, b: undefined }, { a: 1 })).toBe(true);
    expect(sameData({ a: 1 }, { a: 1, b: 2 })).toBe(false);
    expect(sameData({ a: [1, { c: 2 }] }, { a: [1, { c: 2 }] })).toBe(true);
    expect(sameData({ a: [1, 2] }, { a: [2, 1] })).toBe(false);
    expect(sameData({ a: null }, { a: undefined })).toBe(false);
    expect(sameData([1], { 0: 1 })).toBe(false);
    expect(sameData(0.1 + 0.2, 0.3)).toBe(false);
  });
});
