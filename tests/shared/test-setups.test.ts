/**
 * The test set-ups: one declaration per test, and the tracker that says on
 * each display tick whether a set-up holds, for how long, and what is missing
 * in words. Each check names the source of its condition (beside the
 * constant in shared/test-setups.ts), or common practice.
 */
import { describe, expect, it } from 'vitest';
import { compileCar } from '../../sim/compiled-car.ts';
import type { DiagnosticTest } from '../../sim/faults.ts';
import { readMeters } from '../../sim/instruments.ts';
import { defaultVehicleParams } from '../../sim/params.ts';
import { ScriptedBench } from '../../sim/scripted-bench.ts';
import { DIAGNOSTIC_TESTS } from '../../shared/scenario.ts';
import { DISPLAY_TICK_MS } from '../../shared/meter-display.ts';
import {
  DRAW_HOLD_S,
  LOAD_CCA_FRACTION_MAX,
  LOAD_CCA_FRACTION_MIN,
  LOAD_HOLD_S,
  LOADED_ENGINE_RUN_S,
  DROP_PILE_MAX_A,
  DROP_PILE_MIN_A,
  RIPPLE_OUTPUT_SHARE_MAX,
  RIPPLE_OUTPUT_SHARE_MIN,
  LONG_REST_S,
  OCV_HOLD_S,
  OUTPUT_POST_MAX_V,
  OUTPUT_RPM_MIN,
  PILE_FULL_DIAL,
  REGULATED_ENGINE_RUN_S,
  REGULATED_HOLD_S,
  SURFACE_DISCHARGE_S,
  SURFACE_REST_S,
  SetupTracker,
  TEST_SETUPS,
  describeSetup,
  setupCarOf,
  setupSampleOf,
  type SetupSample,
} from '../../shared/test-setups.ts';
import { QUIET_BENCH_SAMPLE } from './setup-samples.ts';

const base = QUIET_BENCH_SAMPLE;

/** Feeds ticks from `fromMs` to `toMs` shaped by `at`; returns the tracker. */
function feed(tracker: SetupTracker, fromMs: number, toMs: number, at: (ms: number) => Partial<Omit<SetupSample, 'atMs'>>): SetupTracker {
  for (let ms = fromMs; ms <= toMs; ms += DISPLAY_TICK_MS) tracker.feed({ ...base, ...at(ms), atMs: ms });
  return tracker;
}

const car = { cca: 600, startsCharged: false, ratedA: 150 };
const runningAt = (rpm: number) => ({ engine: 'running' as const, key: 'on' as const, tachRpm: rpm, batteryA: -2 });

describe('the declarations', () => {
  it('declare every test once, with the quantity its reading is and the conditions in words', () => {
    expect(Object.keys(TEST_SETUPS).sort()).toEqual([...DIAGNOSTIC_TESTS].sort());
    const quantities = Object.fromEntries(DIAGNOSTIC_TESTS.map((t) => [t, TEST_SETUPS[t].quantity]));
    expect(quantities).toEqual({
      'battery-ocv': 'voltage',
      'battery-load': 'voltage',
      cranking: 'voltage',
      'regulated-voltage': 'voltage',
      output: 'current',
      'voltage-drop-positive': 'voltage',
      'voltage-drop-ground': 'voltage',
      ripple: 'ripple',
      'key-off-draw': 'draw',
    });
    for (const test of DIAGNOSTIC_TESTS) {
      const words = describeSetup(test, car);
      expect(words.length).toBeGreaterThanOrEqual(TEST_SETUPS[test].conditions.length);
      for (const w of words) expect(w).toMatch(/^[A-Z]/);
    }
    expect(describeSetup('battery-load', car).join(' ')).toContain(`${LOAD_CCA_FRACTION_MIN * 600}–${LOAD_CCA_FRACTION_MAX * 600} A`);
  });
});

describe('the tracker', () => {
  it('answers for how long a set-up has held and asks for the rest: the open-circuit voltage held 5 s at rest (common practice, no source)', () => {
    const t = feed(new SetupTracker(car), 0, (OCV_HOLD_S - 1) * 1000, () => ({}));
    const s = t.status('battery-ocv');
    expect(s.holds).toBe(false);
    expect(s.unmet).toEqual([`Hold the set-up ${OCV_HOLD_S} s (${OCV_HOLD_S - 1} s so far)`]);
    feed(t, OCV_HOLD_S * 1000, OCV_HOLD_S * 1000, () => ({}));
    expect(t.status('battery-ocv')).toMatchObject({ holds: true, heldMs: OCV_HOLD_S * 1000, unmet: [] });
  });

  it('starts the hold again when a condition drops for one tick', () => {
    const t = feed(new SetupTracker(car), 0, 10_000, (ms) => (ms === 4000 ? { red: 'jump-pos' } : {}));
    expect(t.status('battery-ocv').heldMs).toBe(10_000 - 4100);
  });

  it('says in words what is missing, with what the bench has now', () => {
    const t = feed(new SetupTracker(car), 0, 3000, () => ({ ...runningAt(750), red: 'alt-bplus', clampOn: 'battery-neg-cable', voltmeterV: 0.05 }));
    expect(t.status('output').unmet).toEqual([
      `Hold 1,800–2,600 rpm (now 750)`,
      'The clamp is not on the B+ cable',
      'Put the leads red on the battery + post, black on the battery − post (now red on the alternator B+ stud, black on the battery − post)',
      'Load the pile until the posts read about 12 V, 11.0–12.6 V (now 0.05 V)',
    ]);
  });

  it('asks for the clamp the right way round and zeroed away from any cable before it counts (output test)', () => {
    const out = { ...runningAt(2000), clampOn: 'bplus-cable' as const, voltmeterV: 12.0, pileA: 150, switchedLoadA: 150 };
    const t = feed(new SetupTracker(car), 0, 3000, () => ({ ...out, clampArrow: 'toward-alternator' }));
    expect(t.status('output').unmet).toEqual(['Turn the clamp round: its arrow must point toward the battery']);
    feed(t, 3100, 6000, () => out);
    expect(t.status('output').unmet).toEqual(['Zero the clamp with its jaws away from any cable, then clamp it on again']);
    feed(t, 6100, 6100, () => ({ ...out, clampZeroAway: true }));
    expect(t.status('output').holds).toBe(false);
    feed(t, 6200, 7100, () => ({ ...out, clampZeroAway: true }));
    expect(t.status('output').holds).toBe(true);
    feed(t, 7200, 7200, () => ({ ...out, clampZeroAway: true, voltmeterV: OUTPUT_POST_MAX_V + 0.5 }));
    expect(t.status('output').holds).toBe(false);
  });

  it('wants the engine run long enough before the regulated voltage and the loaded tests', () => {
    const half = REGULATED_HOLD_S / 2;
    const t = feed(new SetupTracker(car), 0, (REGULATED_ENGINE_RUN_S + half) * 1000, () => runningAt(2000));
    expect(t.status('regulated-voltage').unmet).toEqual([`Hold the set-up ${REGULATED_HOLD_S} s (${half} s so far)`]);
    expect(t.status('voltage-drop-positive').unmet).toContain(`Let the engine run ${LOADED_ENGINE_RUN_S} s first (${REGULATED_ENGINE_RUN_S + half} s so far)`);
    feed(t, (REGULATED_ENGINE_RUN_S + half) * 1000 + 100, (REGULATED_ENGINE_RUN_S + REGULATED_HOLD_S) * 1000, () => runningAt(2000));
    expect(t.status('regulated-voltage').holds).toBe(true);
  });

  it('asks for the pile at about 20 A for the drops (Chrysler charging-circuit resistance test: 20 A) and about half the rating for the ripple (Mitsubishi: easiest seen at high output)', () => {
    const drop = { ...runningAt(2000), red: 'alt-bplus' as const, black: 'battery-pos' as const };
    // Headlamps and blower give the load but bypass the post connection: they do not count.
    const t = feed(new SetupTracker(car), 0, LOADED_ENGINE_RUN_S * 1000, () => ({ ...drop, switchedLoadA: 30, pileA: 0 }));
    expect(t.status('voltage-drop-positive').unmet).toEqual([`Set the pile to about 20 A, between ${DROP_PILE_MIN_A} and ${DROP_PILE_MAX_A} A (now 0 A)`]);
    feed(t, LOADED_ENGINE_RUN_S * 1000 + 100, (LOADED_ENGINE_RUN_S + 6) * 1000, () => ({ ...drop, switchedLoadA: 20, pileA: 20 }));
    expect(t.status('voltage-drop-positive').holds).toBe(true);
    // Too much load lifts a healthy harness's drop past its limit: not the test's conditions.
    feed(t, (LOADED_ENGINE_RUN_S + 6) * 1000 + 100, (LOADED_ENGINE_RUN_S + 7) * 1000, () => ({ ...drop, switchedLoadA: 60, pileA: 60 }));
    expect(t.status('voltage-drop-positive').holds).toBe(false);

    const ripple = { ...runningAt(2000), red: 'battery-pos' as const, black: 'battery-neg' as const };
    const r = feed(new SetupTracker(car), 0, LOADED_ENGINE_RUN_S * 1000, () => ({ ...ripple, pileA: 20, outputA: 30 }));
    const lo = Math.round(RIPPLE_OUTPUT_SHARE_MIN * car.ratedA);
    const hi = Math.round(RIPPLE_OUTPUT_SHARE_MAX * car.ratedA);
    expect(r.status('ripple').unmet).toEqual([`Turn the pile up until the alternator gives about half its rating, ${lo}–${hi} A on the B+ cable, or until the battery starts to supply the rest (now 30 A)`]);
    // A unit that cannot give half its rating: loaded until the battery supplies the rest.
    const weak = feed(new SetupTracker(car), 0, (LOADED_ENGINE_RUN_S + 6) * 1000, () => ({ ...ripple, pileA: 60, outputA: 45, batteryA: 18 }));
    expect(weak.status('ripple').holds).toBe(true);
    feed(r, LOADED_ENGINE_RUN_S * 1000 + 100, (LOADED_ENGINE_RUN_S + 6) * 1000, () => ({ ...ripple, pileA: 60, outputA: 0.5 * car.ratedA }));
    expect(r.status('ripple').holds).toBe(true);
  });

  it('holds the load test at half the CCA for 14 s, or with the pile fully up on a battery that cannot deliver it (vehicle maker’s battery test, Kia: ½ CCA for 15 s)', () => {
    const t = feed(new SetupTracker(car), 0, LOAD_HOLD_S * 1000, () => ({ pileA: 300, pileDial01: 0.6 }));
    expect(t.status('battery-load').holds).toBe(true);
    const weak = feed(new SetupTracker(car), 0, LOAD_HOLD_S * 1000, (ms) => ({ pileA: 260 - ms / 500, pileDial01: 1 }));
    expect(weak.status('battery-load').holds).toBe(true);
    const light = feed(new SetupTracker(car), 0, LOAD_HOLD_S * 1000, () => ({ pileA: 150, pileDial01: PILE_FULL_DIAL - 0.1 }));
    expect(light.status('battery-load').unmet[0]).toMatch(/^Load the battery to half its CCA: 240–360 A/);
  });

  it('wants the series ammeter fitted, the key off and the modules asleep for the draw (vehicle maker’s drain test, Ford: after the modules sleep)', () => {
    const t = feed(new SetupTracker(car), 0, 2000, () => ({ ammeterInSeries: true, modulesAwakeS: 150 }));
    expect(t.status('key-off-draw').unmet).toEqual(['Wait for the modules to go to sleep (about 150 s left)']);
    feed(t, 2100, 2100 + DRAW_HOLD_S * 1000, () => ({ ammeterInSeries: true }));
    expect(t.status('key-off-draw').holds).toBe(true);
  });

  it('takes the lowest voltage shown while cranking, and only with the leads on the posts throughout', () => {
    const t = feed(new SetupTracker(car), 0, 3000, (ms) => (ms >= 1000 && ms < 2500 ? { key: 'start', engine: 'cranking', voltmeterV: 10.4 - (ms === 1800 ? 0.3 : 0) } : {}));
    expect(t.status('cranking')).toMatchObject({ holds: true, crankMinV: 10.1 });
    const moved = feed(new SetupTracker(car), 0, 3000, (ms) => (ms >= 1000 && ms < 2500 ? { key: 'start', engine: 'cranking', voltmeterV: 10.4, red: ms === 1500 ? 'jump-pos' : 'battery-pos' } : {}));
    expect(moved.status('cranking').holds).toBe(false);
    expect(new SetupTracker(car).status('cranking').holds).toBe(false);
  });

  describe('surface charge before the open-circuit voltage (vehicle makers’ battery tests: remove it first, or rest)', () => {
    const engineRan = () => feed(new SetupTracker(car), 0, 20_000, (ms) => (ms < 10_000 ? runningAt(800) : {}));

    it('needs nothing when the engine has not run and no charge has flowed', () => {
      expect(feed(new SetupTracker(car), 0, OCV_HOLD_S * 1000, () => ({})).status('battery-ocv').holds).toBe(true);
    });

    it('after the engine ran: a discharge of 10 A or more held 60 s, then 30 s with the key off', () => {
      const t = engineRan();
      expect(t.status('battery-ocv').unmet[0]).toMatch(/^The battery carries a surface charge/);
      const from = 20_100;
      feed(t, from, from + SURFACE_DISCHARGE_S * 1000, () => ({ batteryA: 12, key: 'on' }));
      feed(t, from + SURFACE_DISCHARGE_S * 1000 + 100, from + SURFACE_DISCHARGE_S * 1000 + 10_000, () => ({}));
      expect(t.status('battery-ocv').unmet[0]).toMatch(/^Surface charge removed: now rest 30 s with the key off/);
      const rested = from + SURFACE_DISCHARGE_S * 1000 + 100 + SURFACE_REST_S * 1000;
      feed(t, from + SURFACE_DISCHARGE_S * 1000 + 10_100, rested, () => ({}));
      expect(t.status('battery-ocv').unmet).toEqual([`Hold the set-up ${OCV_HOLD_S} s (0 s so far)`]);
      feed(t, rested + 100, rested + OCV_HOLD_S * 1000, () => ({}));
      expect(t.status('battery-ocv').holds).toBe(true);
    });

    it('or a long rest with the key off', () => {
      const t = engineRan();
      feed(t, 20_100, 20_000 + LONG_REST_S * 1000 + 100, () => ({}));
      expect(t.status('battery-ocv').holds).toBe(true);
    });

    it('counts a car just off the charger as charged', () => {
      expect(feed(new SetupTracker({ cca: 600, startsCharged: true, ratedA: 150 }), 0, 10_000, () => ({})).status('battery-ocv').holds).toBe(false);
    });
  });

  it('is fed from the model’s states: the same sample on the bench and in the server’s re-run', () => {
    const c = compileCar(defaultVehicleParams(), [], 'car');
    const b = new ScriptedBench(c.params, { seed: 3 });
    b.leads('battery-pos', 'battery-neg').key('start').wait(2).key('on').rpm(2000).accessory('headlamps', true).accessory('blower', true).wait(5);
    const s = setupSampleOf(c.params, b.point.state, readMeters(c.params, b.point.state));
    expect(s).toMatchObject({ engine: 'running', key: 'on', red: 'battery-pos', black: 'battery-neg', accessoriesOn: 2 });
    expect(s.tachRpm).toBeGreaterThan(OUTPUT_RPM_MIN);
    // Headlamps and the blower high at about 14 V: some 25 to 35 A of switched load.
    expect(s.switchedLoadA).toBeGreaterThan(25);
    expect(s.switchedLoadA).toBeLessThan(35);
    expect(setupCarOf(c.params)).toEqual({ cca: 600, startsCharged: false, ratedA: 150 });
  });

  it('reports every test at once, and nothing before the first tick', () => {
    const t = new SetupTracker(car);
    expect(t.status('output').unmet).toEqual(['The bench has not started yet']);
    feed(t, 0, 100, () => ({}));
    const all = t.statuses();
    expect(Object.keys(all).sort()).toEqual([...DIAGNOSTIC_TESTS].sort());
    // At rest, on the posts, 0.1 s in: no set-up has held its time yet.
    for (const test of DIAGNOSTIC_TESTS as readonly DiagnosticTest[]) expect(all[test].holds, test).toBe(false);
  });
});
