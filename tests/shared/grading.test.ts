import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { Fault } from '../../sim/faults.ts';
import { initialControls, type Controls } from '../../sim/inputs.ts';
import type { Readings } from '../../sim/instruments.ts';
import type { RecordedReading, SubmitInput } from '../../shared/api/attempts.ts';
import type { ReferenceMeasurements } from '../../shared/reference-procedures.ts';
import { DIAGNOSTIC_TESTS } from '../../shared/scenario.ts';
import {
  actualFaultKinds,
  checkReading,
  correctVerdicts,
  findMistakes,
  gradeAttempt,
  toleranceFor,
  type GradeInput,
  type RunSample,
} from '../../server/services/grading.ts';

const quiet: Readings = {
  voltmeterV: 12.6,
  rippleVac: 0.02,
  rippleHz: null,
  clampA: 0,
  tachRpm: 0,
  ammeterA: null,
  pileA: 0,
  engine: 'off',
  engineStopCause: null,
  ammeterFuseBlown: false,
  ammeterOverRange: false,
  beltSquealing: false,
  batteryGassing: false,
  fusibleLinkOpen: false,
  pileTempC: 25,
  pileOverheated: false,
  pileHot: false,
  chargeWarning: false,
  batterySoc01: 0.9,
  simTimeS: 0,
};

/** A re-run every 100 ms for `seconds`, with readings and controls shaped by `at`. */
function run(seconds: number, at: (ms: number) => { r?: Partial<Readings>; c?: Partial<Controls>; linkBurnt?: boolean } = () => ({})): RunSample[] {
  const out: RunSample[] = [];
  for (let ms = 0; ms <= seconds * 1000; ms += 100) {
    const x = at(ms);
    out.push({ atMs: ms, readings: { ...quiet, simTimeS: ms / 1000, ...x.r }, controls: { ...initialControls(), ...x.c }, linkBurnt: x.linkBurnt ?? false });
  }
  return out;
}

const reading = (over: Partial<RecordedReading>): RecordedReading => ({
  id: 'r1',
  test: 'battery-ocv',
  quantity: 'voltage',
  value: 12.6,
  unit: 'V',
  atMs: 5000,
  where: 'battery posts',
  ...over,
});

describe('checking a reading against the re-run', () => {
  it('accepts the meter value within max(1 %, 0.05 V) and refuses beyond it', () => {
    const samples = run(10, () => ({ r: { voltmeterV: 12.6 } }));
    expect(checkReading(reading({ value: 12.72 }), samples).ok).toBe(true);
    expect(checkReading(reading({ value: 12.8 }), samples).ok).toBe(false);
    expect(checkReading(reading({ value: 12.4 }), samples).ok).toBe(false);
    const drop = run(10, () => ({ r: { voltmeterV: 0.12 } }));
    expect(checkReading(reading({ value: 0.16 }), drop).ok).toBe(true);
    expect(checkReading(reading({ value: 0.2 }), drop).ok).toBe(false);
    const bad = checkReading(reading({ value: 13.2 }), samples);
    expect(bad).toMatchObject({ ok: false, expectedValue: 12.6 });
    expect(bad.message).toBe('The voltmeter showed 12.60 V then, not 13.20 V.');
    expect(toleranceFor('voltage', 14)).toBeCloseTo(0.14);
    expect(toleranceFor('current', 150)).toBeCloseTo(3);
    expect(toleranceFor('current', 10)).toBe(1);
    expect(toleranceFor('ripple', 0.1)).toBe(0.01);
  });

  it('accepts a value the meter showed within 1.5 s of the moment, not later than that', () => {
    // The voltmeter steps from 12.6 V to 14.0 V at 6 s.
    const samples = run(20, (ms) => ({ r: { voltmeterV: ms < 6000 ? 12.6 : 14.0 } }));
    expect(checkReading(reading({ value: 14.0, atMs: 5000 }), samples).ok).toBe(true);
    expect(checkReading(reading({ value: 14.0, atMs: 4000 }), samples).ok).toBe(false);
    expect(checkReading(reading({ value: 12.6, atMs: 7400 }), samples).ok).toBe(true);
    expect(checkReading(reading({ value: 12.6, atMs: 7600 }), samples).ok).toBe(false);
  });

  it('reads ripple in mV and draw in mA, and current from the clamp or the pile ammeter', () => {
    const samples = run(10, () => ({ r: { rippleVac: 0.32, clampA: 96.4, pileA: 210, ammeterA: 0.042 } }));
    expect(checkReading(reading({ quantity: 'ripple', unit: 'mV', value: 320, test: 'ripple' }), samples).ok).toBe(true);
    expect(checkReading(reading({ quantity: 'ripple', unit: 'mV', value: 500, test: 'ripple' }), samples)).toMatchObject({ ok: false, expectedValue: 320 });
    expect(checkReading(reading({ quantity: 'draw', unit: 'mA', value: 42, test: 'key-off-draw' }), samples).ok).toBe(true);
    expect(checkReading(reading({ quantity: 'current', unit: 'A', value: 96, test: 'output' }), samples).ok).toBe(true);
    expect(checkReading(reading({ quantity: 'current', unit: 'A', value: 210, test: 'output' }), samples).ok).toBe(true);
    expect(checkReading(reading({ quantity: 'current', unit: 'A', value: 150, test: 'output' }), samples).ok).toBe(false);
  });

  it('says so when no meter for the quantity was connected', () => {
    const samples = run(10, () => ({ r: { voltmeterV: null } }));
    expect(checkReading(reading({ value: 12.6 }), samples)).toMatchObject({ ok: false, expectedValue: null, message: 'No meter for voltage was connected at that moment.' });
  });
});

describe('mistakes found in the re-run', () => {
  it('finds a clamp read negative on the B+ cable for a second with the engine running, not a brief blip', () => {
    const clampOn = { clamp: { conductor: 'bplus-cable' as const, arrow: 'toward-alternator' as const } };
    const held = run(20, (ms) => ({ c: clampOn, r: { engine: 'running', clampA: ms >= 5000 ? -60 : 0 } }));
    expect(findMistakes(held, [])).toEqual([expect.objectContaining({ kind: 'reversed-clamp', atMs: 5000 })]);
    const blip = run(20, (ms) => ({ c: clampOn, r: { engine: 'running', clampA: ms >= 5000 && ms < 5500 ? -60 : 10 } }));
    expect(findMistakes(blip, [])).toEqual([]);
  });

  it('finds a load held past 20 s, but not a 15 s load test', () => {
    // Keep load bursts to about 15 s: vehicle maker's output-test procedure (Kia).
    const fifteen = run(40, (ms) => ({ r: { pileA: ms >= 1000 && ms < 16_000 ? 300 : 0 } }));
    expect(findMistakes(fifteen, [])).toEqual([]);
    const long = run(40, (ms) => ({ r: { pileA: ms >= 1000 && ms < 26_000 ? 300 : 0 } }));
    expect(findMistakes(long, []).map((m) => m.kind)).toEqual(['long-loaded-test']);
  });

  it('finds a link burnt, a pile cut out, a stall and a run-down battery at the moment each happened', () => {
    const samples = run(60, (ms) => ({
      linkBurnt: ms >= 10_000,
      r: { pileOverheated: ms >= 20_000, engine: ms >= 30_000 ? 'stalled' : 'running', batterySoc01: ms >= 40_000 ? 0.7 : 0.9 },
    }));
    expect(findMistakes(samples, []).map((m) => [m.kind, m.atMs])).toEqual([
      ['blown-fusible-link', 10_000],
      ['pile-overheated', 20_000],
      ['engine-stalled', 30_000],
      ['battery-run-down', 40_000],
    ]);
  });

  it('does not count a link that came open with the car, and counts a reversed reading written down', () => {
    const open = run(10, () => ({ r: { fusibleLinkOpen: true } }));
    expect(findMistakes(open, [])).toEqual([]);
    const kinds = findMistakes(run(10), [reading({ value: -12.5 }), reading({ id: 'c', quantity: 'current', unit: 'A', value: -40, test: 'output' })]).map((m) => m.kind);
    expect(kinds.sort()).toEqual(['reversed-clamp', 'reversed-leads']);
  });
});

describe('verdicts and the fault', () => {
  it('takes the right verdict of each test from its reference measurement, not from the fault catalogue', () => {
    // An open diode at 2,000 rpm: output passes, ripple fails (the reference procedure's readings).
    const m = Object.fromEntries(
      DIAGNOSTIC_TESTS.map((t) => [t, { value: 0, unit: 'V' as const, pass: t !== 'ripple', marginToLimit: t === 'ripple' ? -0.1 : 1, conditions: '' }]),
    ) as ReferenceMeasurements;
    const verdicts = correctVerdicts(m);
    expect(verdicts.output).toBe(true);
    expect(verdicts.ripple).toBe(false);
    expect(DIAGNOSTIC_TESTS.filter((t) => !verdicts[t])).toEqual(['ripple']);
  });

  it('counts a fault only once its onset has passed', () => {
    const faults: Fault[] = [
      { id: 'a', kind: 'belt-slip', severity01: 1, onsetS: 0 },
      { id: 'b', kind: 'diode-open', severity01: 1, onsetS: 120 },
    ];
    expect(actualFaultKinds(faults, 60_000)).toEqual(['belt-slip']);
    expect(actualFaultKinds(faults, 120_000)).toEqual(['belt-slip', 'diode-open']);
  });
});

describe('the grade', () => {
  const samples = run(30, () => ({ r: { voltmeterV: 12.6 } }));
  const base = (over: Partial<GradeInput> = {}, diagnosis: Partial<SubmitInput['diagnosis']> = {}): GradeInput => ({
    mode: 'assigned',
    submission: {
      atMs: 30_000,
      readings: [reading({ test: 'battery-ocv' }), reading({ id: 'r2', test: 'battery-load', atMs: 10_000 })],
      diagnosis: { verdicts: [{ test: 'battery-ocv', pass: false }, { test: 'battery-load', pass: false }], faultKind: 'battery-weak', notes: '', ...diagnosis },
    },
    testsExpected: ['battery-ocv', 'battery-load'],
    correctVerdicts: { ...Object.fromEntries(DIAGNOSTIC_TESTS.map((t) => [t, true])), 'battery-ocv': false, 'battery-load': false } as Record<(typeof DIAGNOSTIC_TESTS)[number], boolean>,
    faults: [{ id: 'w', kind: 'battery-weak', severity01: 0.8, onsetS: 0 }],
    samples,
    showFeedback: true,
    curve: null,
    pulleyRatio: 2.8,
    ...over,
  });

  it('gives 100 for right verdicts, the right fault and a verified reading for every expected test', () => {
    const r = gradeAttempt(base());
    expect(r).toMatchObject({ grade: 100, verified: true, mistakes: [], timeToDiagnosisMs: 30_000 });
    expect(r.fault).toEqual({ given: 'battery-weak', actual: ['battery-weak'], ok: true, labels: ['Weak (sulfated) battery'] });
    expect(r.feedback).toEqual(['Right diagnosis: Weak (sulfated) battery.']);
  });

  it('takes 40 points for the verdicts, 30 for the fault and 30 for the evidence', () => {
    expect(gradeAttempt(base({}, { faultKind: 'none' })).grade).toBe(70);
    expect(gradeAttempt(base({}, { verdicts: [{ test: 'battery-ocv', pass: true }] })).grade).toBe(60);
    const noEvidence = base();
    noEvidence.submission = { ...noEvidence.submission, readings: [] };
    expect(gradeAttempt(noEvidence).grade).toBe(70);
  });

  it('takes 5 points per unverified reading and per mistake, each capped at 20', () => {
    const made = base();
    made.submission = { ...made.submission, readings: [...made.submission.readings, ...[3, 4, 5, 6, 7].map((i) => reading({ id: `x${i}`, value: 9 }))] };
    const r = gradeAttempt(made);
    expect(r.verified).toBe(false);
    expect(r.grade).toBe(80);
    const clumsy = gradeAttempt(base({ samples: run(30, (ms) => ({ r: { voltmeterV: 12.6, pileA: ms > 1000 ? 300 : 0, pileOverheated: ms > 25_000 } })) }));
    expect(clumsy.mistakes.map((m) => m.kind)).toEqual(['long-loaded-test', 'pile-overheated']);
    expect(clumsy.grade).toBe(90);
  });

  it('leaves practice ungraded and hides feedback when the assignment says so', () => {
    expect(gradeAttempt(base({ mode: 'practice' })).grade).toBeNull();
    const hidden = gradeAttempt(base({ showFeedback: false }, { faultKind: 'none' }));
    expect(hidden.feedback).toEqual([]);
    expect(hidden.fault.actual).toEqual(['battery-weak']);
    expect(hidden.outputCurve).toBeUndefined();
  });

  it('puts verified output readings on the curve at the alternator speed of their moment', () => {
    const s = run(30, () => ({ r: { clampA: 120, tachRpm: 2000 } }));
    const r = gradeAttempt(
      base({
        samples: s,
        curve: { healthy: [{ altRpm: 0, currentA: 0 }], fitted: [{ altRpm: 0, currentA: 0 }] },
        submission: { atMs: 30_000, readings: [reading({ test: 'output', quantity: 'current', unit: 'A', value: 120 })], diagnosis: { verdicts: [], faultKind: 'none', notes: '' } },
      }),
    );
    expect(r.measuredPoints).toEqual([{ altRpm: 5600, currentA: 120 }]);
  });

  it('stays within 0..100 whatever is submitted', () => {
    const arbReading = fc.record({
      value: fc.double({ min: -50, max: 500, noNaN: true }),
      atMs: fc.integer({ min: 0, max: 30_000 }),
      test: fc.constantFrom(...DIAGNOSTIC_TESTS),
    });
    fc.assert(
      fc.property(fc.array(arbReading, { maxLength: 12 }), fc.array(fc.boolean(), { minLength: 2, maxLength: 2 }), fc.constantFrom('none', 'battery-weak', 'diode-open' as const), (rs, passes, kind) => {
        const input = base();
        input.submission = {
          atMs: 30_000,
          readings: rs.map((x, i) => reading({ id: `p${i}`, ...x })),
          diagnosis: { verdicts: [{ test: 'battery-ocv', pass: passes[0]! }, { test: 'battery-load', pass: passes[1]! }], faultKind: kind, notes: '' },
        };
        const g = gradeAttempt(input).grade!;
        return Number.isInteger(g) && g >= 0 && g <= 100;
      }),
      { numRuns: 200 },
    );
  });
});
