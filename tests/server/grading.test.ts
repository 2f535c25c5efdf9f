/**
 * The grader on made-up re-runs: a reading is evidence only with the value
 * the display showed and inside its test's set-up; the grade's parts and
 * weights; the process mistakes. The weights and limits are the product's own
 * (docs/grading.md: common practice, no source), except where a test names
 * its source.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { GRADE_WEIGHTS, PROCESS_DEDUCTION, hintsOfLog, logEventSchema, modelEvents, type LogEvent, type RecordedReading, type SubmitInput } from '../../shared/api/attempts.ts';
import type { ReferenceMeasurements } from '../../server/grading/reference-procedures.ts';
import { DIAGNOSTIC_TESTS } from '../../shared/scenario.ts';
import { OCV_HOLD_S, REGULATED_ENGINE_RUN_S, REGULATED_HOLD_S, type SetupSample } from '../../shared/test-setups.ts';
import {
  LINK_OVERLOAD_HEAT,
  LONG_LOAD_MS,
  REVERSED_CLAMP_MS,
  checkReadings,
  correctVerdicts,
  findMistakes,
  gradeAttempt,
  type GradeInput,
  type RunSample,
} from '../../server/grading/grade-attempt.ts';
import { QUIET_BENCH_SAMPLE } from '../shared/setup-samples.ts';

const CAR = { cca: 600, startsCharged: false, ratedA: 150 };

const quietReadings: RunSample['readings'] = {
  voltmeterV: 12.6,
  rippleVac: 0.02,
  clampA: 0,
  tachRpm: 0,
  ammeterA: null,
  pileA: 0,
  engine: 'off',
  pileOverheated: false,
  batterySoc01: 0.9,
};

const quietSetup = QUIET_BENCH_SAMPLE;

interface At {
  r?: Partial<RunSample['readings']>;
  s?: Partial<Omit<SetupSample, 'atMs'>>;
  linkBurnt?: boolean;
  linkHeat01?: number;
  bplusConnected?: boolean;
}

/** A re-run every 100 ms for `seconds`, shaped by `at`; the set-up's meters follow the readings'. */
function run(seconds: number, at: (ms: number) => At = () => ({})): RunSample[] {
  const out: RunSample[] = [];
  for (let ms = 0; ms <= seconds * 1000; ms += 100) {
    const x = at(ms);
    const readings = { ...quietReadings, ...x.r };
    out.push({
      atMs: ms,
      readings,
      setup: { ...quietSetup, engine: readings.engine, tachRpm: readings.tachRpm, pileA: readings.pileA, voltmeterV: readings.voltmeterV, ...x.s, atMs: ms },
      linkBurnt: x.linkBurnt ?? false,
      linkHeat01: x.linkHeat01 ?? 0,
      bplusConnected: x.bplusConnected ?? true,
    });
  }
  return out;
}

const reading = (over: Partial<RecordedReading>): RecordedReading => ({
  id: 'r1',
  test: 'battery-ocv',
  quantity: 'voltage',
  value: 12.6,
  unit: 'V',
  atMs: 8000,
  where: 'battery posts',
  ...over,
});

/** The engine running at 2,000 rpm from 2 s, leads on the posts, 14.1 V. */
const running = (ms: number): At => (ms >= 2000 ? { r: { engine: 'running', tachRpm: 2000, voltmeterV: 14.12 }, s: { key: 'on', batteryA: -3 } } : {});

describe('a reading as evidence', () => {
  it('counts the value the display showed at its tick, inside the set-up, and nothing near it', () => {
    const samples = run(20);
    const [ok] = checkReadings([reading({ value: 12.6 })], samples, CAR, 20_000);
    expect(ok).toMatchObject({ valueOk: true, inSetup: true, evidence: true, shown: 12.6 });
    // One display step off is not what the bench showed.
    const [off] = checkReadings([reading({ value: 12.61 })], samples, CAR, 20_000);
    expect(off).toMatchObject({ valueOk: false, evidence: false, shown: 12.6 });
    expect(off!.reason).toContain('12.60 V');
  });

  it('keeps a reading taken outside its set-up, says why, and counts it for nothing', () => {
    // The attack: a key-off battery voltage labelled as the regulated voltage, engine never started.
    const samples = run(20);
    const [c] = checkReadings([reading({ test: 'regulated-voltage' })], samples, CAR, 20_000);
    expect(c).toMatchObject({ valueOk: true, inSetup: false, evidence: false });
    expect(c!.reason).toMatch(/outside the test’s set-up: Start the engine/);
    expect(c!.unmet).toContain('Start the engine');
  });

  it('refuses a reading of another quantity than its test’s: the idle pile’s 0 A is not an output reading', () => {
    const samples = run(20, (ms) => ({ ...running(ms), r: { ...running(ms).r, clampA: null } }));
    const [c] = checkReadings([reading({ test: 'output', quantity: 'draw', value: 0, unit: 'mA' })], samples, CAR, 20_000);
    expect(c).toMatchObject({ inSetup: false, evidence: false });
    expect(c!.reason).toMatch(/is read as amps on the clamp/);
  });

  it('waits for the set-up to have held its time: the regulated voltage after 20 s of running and 10 s held', () => {
    const samples = run(60, running);
    const early = 2000 + REGULATED_ENGINE_RUN_S * 1000 + 5000;
    const late = 2000 + REGULATED_ENGINE_RUN_S * 1000 + REGULATED_HOLD_S * 1000 + 100;
    const [a, b] = checkReadings(
      [reading({ id: 'a', test: 'regulated-voltage', value: 14.12, atMs: early }), reading({ id: 'b', test: 'regulated-voltage', value: 14.12, atMs: late })],
      samples,
      CAR,
      60_000,
    );
    expect(a).toMatchObject({ inSetup: false, evidence: false });
    expect(a!.unmet.some((u) => u.startsWith('Hold the set-up 10 s'))).toBe(true);
    expect(b).toMatchObject({ inSetup: true, evidence: true });
  });

  it('finds no display tick between the ticks or after the submission', () => {
    const samples = run(20);
    const [between, after] = checkReadings([reading({ id: 'x', atMs: 8050 }), reading({ id: 'y', atMs: 30_000 })], samples, CAR, 20_000);
    expect(between).toMatchObject({ valueOk: false, evidence: false, shown: null });
    expect(after).toMatchObject({ valueOk: false, evidence: false });
  });

  it('reads ripple in whole mV and draw in whole mA, as the display shows them', () => {
    const samples = run(20, () => ({ r: { rippleVac: 0.0284, ammeterA: 0.02549 }, s: { ammeterInSeries: true } }));
    const [ripple, draw] = checkReadings(
      [reading({ id: 'r', test: 'ripple', quantity: 'ripple', value: 28, unit: 'mV' }), reading({ id: 'd', test: 'key-off-draw', quantity: 'draw', value: 25, unit: 'mA' })],
      samples,
      CAR,
      20_000,
    );
    expect(ripple).toMatchObject({ valueOk: true, shown: 28 });
    expect(draw).toMatchObject({ valueOk: true, shown: 25, inSetup: true, evidence: true });
  });

  it('takes the lowest voltage shown during the crank as the cranking reading', () => {
    const samples = run(10, (ms) => (ms >= 1000 && ms < 2500 ? { r: { engine: 'cranking', voltmeterV: ms === 1500 ? 10.21 : 10.6 }, s: { key: 'start' } } : ms >= 2500 ? { r: { engine: 'running', tachRpm: 750 }, s: { key: 'on' } } : {}));
    const [min, now] = checkReadings([reading({ id: 'm', test: 'cranking', value: 10.21, atMs: 4000 }), reading({ id: 'n', test: 'cranking', value: 12.6, atMs: 4000 })], samples, CAR, 10_000);
    expect(min).toMatchObject({ valueOk: true, evidence: true });
    expect(now).toMatchObject({ valueOk: false, evidence: false });
  });

  it('holds the open-circuit reading to a rest after the engine has run (surface charge)', () => {
    // The engine ran 2-20 s; then key off: the surface charge must go before the reading counts.
    const samples = run(200, (ms) => (ms >= 2000 && ms < 20_000 ? running(ms) : {}));
    const soon = 20_000 + (OCV_HOLD_S + 2) * 1000;
    const [c] = checkReadings([reading({ test: 'battery-ocv', atMs: soon })], samples, CAR, 200_000);
    expect(c).toMatchObject({ inSetup: false, evidence: false });
    expect(c!.reason).toMatch(/surface charge/);
  });
});

describe('mistakes found in the re-run', () => {
  it('finds a reversed clamp left uncorrected, not one turned round at once', () => {
    const left = run(20, (ms) => ({ r: { engine: 'running', clampA: ms > 2000 ? -80 : 0 }, s: { clampOn: 'bplus-cable' } }));
    const turned = run(20, (ms) => ({ r: { engine: 'running', clampA: ms > 2000 && ms < 2000 + REVERSED_CLAMP_MS - 500 ? -80 : 60 }, s: { clampOn: 'bplus-cable' } }));
    expect(findMistakes(left).map((m) => m.kind)).toContain('reversed-clamp');
    expect(findMistakes(turned).map((m) => m.kind)).not.toContain('reversed-clamp');
  });

  it('finds a load held past 20 s, but not a 15 s load test (vehicle maker’s output test, Kia: within 15 seconds)', () => {
    const long = run(40, (ms) => ({ r: { pileA: ms > 1000 && ms < 1000 + LONG_LOAD_MS + 1500 ? 300 : 0 } }));
    const short = run(40, (ms) => ({ r: { pileA: ms > 1000 && ms < 16_000 ? 300 : 0 } }));
    expect(findMistakes(long).map((m) => m.kind)).toContain('long-loaded-test');
    expect(findMistakes(short).map((m) => m.kind)).not.toContain('long-loaded-test');
  });

  it('finds a link heated near melting under a load the student switched on, a link blown, B+ removed with the engine running', () => {
    const hot = run(20, (ms) => ({ linkHeat01: ms > 5000 ? LINK_OVERLOAD_HEAT + 0.01 : 0.2, s: { switchedLoadA: 200 } }));
    expect(findMistakes(hot).map((m) => m.kind)).toEqual(['link-overloaded']);
    const noLoad = run(20, (ms) => ({ linkHeat01: ms > 5000 ? LINK_OVERLOAD_HEAT + 0.01 : 0.2 }));
    expect(findMistakes(noLoad)).toEqual([]);
    const blown = run(20, (ms) => ({ linkBurnt: ms > 5000, linkHeat01: ms > 4000 ? 1 : 0.5, s: { switchedLoadA: 200 } }));
    expect(findMistakes(blown).map((m) => m.kind)).toEqual(['blown-fusible-link']);
    const bplus = run(20, (ms) => ({ r: { engine: 'running' }, bplusConnected: ms < 6000 }));
    expect(findMistakes(bplus)).toMatchObject([{ kind: 'bplus-removed-running', atMs: 6000, process: true }]);
  });

  it('notes a stall and a run-down battery without taking process points for them', () => {
    const samples = run(30, (ms) => ({ r: { engine: ms > 10_000 ? 'stalled' : 'running', batterySoc01: ms > 20_000 ? 0.6 : 0.9 } }));
    const found = findMistakes(samples);
    expect(found.map((m) => [m.kind, m.process])).toEqual([
      ['engine-stalled', false],
      ['battery-run-down', false],
    ]);
  });
});

describe('verdicts and the fault', () => {
  it('takes the right verdict of each test from its reference measurement, not from the fault catalogue', () => {
    const m = Object.fromEntries(DIAGNOSTIC_TESTS.map((t) => [t, { value: 1, unit: 'V', pass: t !== 'output', marginToLimit: 1, conditions: '' }])) as unknown as ReferenceMeasurements;
    const v = correctVerdicts(m);
    expect(v.output).toBe(false);
    expect(v['regulated-voltage']).toBe(true);
  });
});

describe('the grade', () => {
  const samples = run(60, running);
  const evidence = reading({ id: 'reg', test: 'regulated-voltage', value: 14.12, atMs: 40_000 });
  const base = (over: Partial<GradeInput> = {}, submission: Partial<SubmitInput> = {}): GradeInput => ({
    mode: 'assigned',
    submission: { atMs: 60_000, diagnosis: { verdicts: [{ test: 'regulated-voltage', pass: true }], faultKind: 'none', notes: '' }, ...submission },
    readings: [evidence],
    testsExpected: ['regulated-voltage'],
    correctVerdicts: Object.fromEntries(DIAGNOSTIC_TESTS.map((t) => [t, true])) as GradeInput['correctVerdicts'],
    actualKinds: [],
    samples,
    car: CAR,
    flags: [],
    showFeedback: true,
    curve: null,
    pulleyRatio: 2.8,
    ...over,
  });

  it('states its weights: 40 evidence, 20 verdicts, 20 fault, 20 process', () => {
    expect(GRADE_WEIGHTS).toEqual({ evidence: 40, verdicts: 20, fault: 20, process: 20 });
    const r = gradeAttempt(base());
    expect(r.scoring).toEqual({ weights: GRADE_WEIGHTS, points: { evidence: 40, verdicts: 20, fault: 20, process: 20 }, processDeduction: PROCESS_DEDUCTION, hintDeduction: 0 });
    expect(r.grade).toBe(100);
    expect(r.verified).toBe(true);
  });

  it('gives nothing for the right answer without evidence, and is not verified', () => {
    const r = gradeAttempt(base({ readings: [] }));
    expect(r.grade).toBe(0);
    expect(r.verified).toBe(false);
    expect(r.verdicts[0]).toMatchObject({ ok: true, evidenced: false });
  });

  it('weighs evidence per expected test and scales the fault and the process by it', () => {
    const r = gradeAttempt(base({ testsExpected: ['regulated-voltage', 'output'], correctVerdicts: Object.fromEntries(DIAGNOSTIC_TESTS.map((t) => [t, true])) as GradeInput['correctVerdicts'] }, { diagnosis: { verdicts: [{ test: 'regulated-voltage', pass: true }, { test: 'output', pass: true }], faultKind: 'none', notes: '' } }));
    expect(r.scoring!.points).toEqual({ evidence: 20, verdicts: 10, fault: 10, process: 10 });
    expect(r.grade).toBe(50);
    expect(r.verified).toBe(false);
  });

  it('takes 10 process points per kind of process mistake', () => {
    const bad = run(60, (ms) => ({ ...running(ms), bplusConnected: ms < 50_000 }));
    const r = gradeAttempt(base({ samples: bad }));
    expect(r.scoring!.points.process).toBe(GRADE_WEIGHTS.process - PROCESS_DEDUCTION);
    expect(r.grade).toBe(90);
  });

  it('is not verified when an injection was flagged, or a reading did not match the display', () => {
    const flagged = gradeAttempt(base({ flags: [{ kind: 'injection-not-logged', injectionId: 3, appliedAtMs: 1000, message: 'x' }] }));
    expect(flagged.verified).toBe(false);
    expect(flagged.grade).toBe(100);
    const forged = gradeAttempt(base({ readings: [evidence, reading({ id: 'f', test: 'output', quantity: 'current', value: 151, unit: 'A', atMs: 41_000 })] }));
    expect(forged.verified).toBe(false);
  });

  it('takes the scenario’s points for each hint opened off the total, says so, and counts hints in practice without grading them', () => {
    const free = gradeAttempt(base({ hints: { opened: 2, pointsEach: 0 } }));
    expect(free.grade).toBe(100);
    expect(free.hints).toEqual({ opened: 2, pointsEach: 0 });
    const costly = gradeAttempt(base({ hints: { opened: 2, pointsEach: 5 } }));
    expect(costly.grade).toBe(90);
    expect(costly.scoring!.hintDeduction).toBe(10);
    expect(costly.scoring!.points).toEqual({ evidence: 40, verdicts: 20, fault: 20, process: 20 });
    expect(costly.feedback).toContain('You opened 2 of the scenario’s hints: 10 points off the grade.');
    // Never below zero, however many hints.
    expect(gradeAttempt(base({ readings: [], hints: { opened: 10, pointsEach: 10 } })).grade).toBe(0);
    const practice = gradeAttempt(base({ mode: 'practice', hints: { opened: 1, pointsEach: 5 } }));
    expect(practice.grade).toBeNull();
    expect(practice.hints).toEqual({ opened: 1, pointsEach: 5 });
    expect(practice.feedback).toContain('You opened 1 of the scenario’s hints.');
  });

  it('leaves practice ungraded', () => {
    const r = gradeAttempt(base({ mode: 'practice' }));
    expect(r.grade).toBeNull();
    expect(r.scoring).toBeNull();
  });

  it('stays within 0..100 whatever is submitted', () => {
    fc.assert(
      fc.property(
        fc.array(fc.record({ test: fc.constantFrom(...DIAGNOSTIC_TESTS), value: fc.double({ min: -50, max: 50, noNaN: true }), tick: fc.integer({ min: 0, max: 600 }) }), { maxLength: 12 }),
        fc.array(fc.record({ test: fc.constantFrom(...DIAGNOSTIC_TESTS), pass: fc.boolean() }), { maxLength: 9 }),
        (rs, vs) => {
          const readings = rs.map((x, i) => reading({ id: `r${i}`, test: x.test, value: x.value, atMs: x.tick * 100 }));
          const verdicts = [...new Map(vs.map((v) => [v.test, v])).values()];
          const r = gradeAttempt(base({ readings, testsExpected: ['regulated-voltage', 'output', 'ripple'] }, { diagnosis: { verdicts, faultKind: 'none', notes: '' } }));
          expect(r.grade).toBeGreaterThanOrEqual(0);
          expect(r.grade).toBeLessThanOrEqual(100);
        },
      ),
    );
  });
});

describe('hints in the log', () => {
  it('are the student’s notes, not inputs of the model, each counted once, up to the submission', () => {
    const log: LogEvent[] = [
      { kind: 'key', atMs: 100, position: 'on' },
      { kind: 'hint', atMs: 2_000, index: 1 },
      { kind: 'hint', atMs: 3_000, index: 1 },
      { kind: 'hint', atMs: 4_000, index: 0 },
      { kind: 'hint', atMs: 9_000, index: 2 },
    ];
    expect(modelEvents(log)).toEqual([{ kind: 'key', atMs: 100, position: 'on' }]);
    expect(hintsOfLog(log)).toEqual([1, 0, 2]);
    expect(hintsOfLog(log, 5_000)).toEqual([1, 0]);
    expect(logEventSchema.safeParse({ kind: 'hint', atMs: 10, index: 10 }).success).toBe(false);
    expect(logEventSchema.safeParse({ kind: 'hint', atMs: 10, index: 3 }).success).toBe(true);
  });
});
