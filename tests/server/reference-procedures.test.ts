/**
 * The reference procedures over the demo library: the healthy control passes
 * every test, every faulted scenario fails at least one of the tests it
 * expects, and each expected test's reading sits clear of its limit by more
 * than the grader's reading tolerance, so no verified reading can land on the
 * other side of the limit.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { DiagnosticTest } from '../../sim/faults.ts';
import type { RecordedReading } from '../../shared/api/attempts.ts';
import { CRANKING_MIN_V, RUNNING_TESTS, referenceMeasurements, type ReferenceMeasurements } from '../../server/grading/reference-procedures.ts';
import { FAULT_CATALOG, FAULT_KINDS } from '../../sim/faults.ts';
import { DIAGNOSTIC_TESTS, defaultPassRules, outputPassMarkA, restoreScenario, type ScenarioDefinition } from '../../shared/scenario.ts';
import { defaultVehicleParams } from '../../sim/params.ts';
import { meterShows } from '../../shared/meter-display.ts';

const dir = new URL('../../scenarios/', import.meta.url);
const files = readdirSync(dir).filter((f) => f.endsWith('.json')).sort();
const load = (file: string): ScenarioDefinition => restoreScenario(JSON.parse(readFileSync(new URL(file, dir), 'utf8')));

/** Where each limit the healthy control must meet comes from. */
const SOURCE: Readonly<Record<DiagnosticTest, string>> = {
  'battery-ocv': 'BCI open-circuit table; OEM: Chrysler 2005 300 (charge to 12.4 V before load testing)',
  'battery-load': 'OEM: Kia Amanti / GM (half CCA for 15 s, 9.6 V at 21 °C); check value 10',
  'regulated-voltage': 'OEM: BMW E38 technical information (13.5–14.5 V)',
  output: 'common practice, no source ("within 10 % of rating"); check value 5 (ISO 8854/SAE J56)',
  'voltage-drop-positive': 'OEM: Hyundai 2017 Azera (loads on, set for 20 A: ≤ 0.2 V); check value 11',
  'voltage-drop-ground': 'toyotaguru.us textbook copy (≈ 2,000 rpm, ≤ 0.2 V); excelauto.com (≤ 0.2 V); check value 11',
  ripple: 'Tomorrow’s Technician, "Alternator Ripple Testing" (replace above 50 mV, some cars allow 100 mV); OEM Mitsubishi (easiest seen at high output); check value 12',
  'key-off-draw': 'OEM: Ford 2023 Edge (25–50 mA after the modules sleep)',
  cranking: 'common practice, no source (9.6 V while cranking)',
};

/** The quantity a student records for each test, for the display's resolution. */
const QUANTITY: Readonly<Record<DiagnosticTest, RecordedReading['quantity']>> = {
  'battery-ocv': 'voltage',
  'battery-load': 'voltage',
  'regulated-voltage': 'voltage',
  output: 'current',
  'voltage-drop-positive': 'voltage',
  'voltage-drop-ground': 'voltage',
  ripple: 'ripple',
  'key-off-draw': 'draw',
  cranking: 'voltage',
};

/** One step of the display's last digit for a quantity at a value, in the reference's unit (V, V AC, A). */
function displayStep(quantity: RecordedReading['quantity'], value: number): number {
  const meters = { voltmeterV: value, rippleVac: value, clampA: value, ammeterA: value, tachRpm: value };
  const shown = meterShows(quantity, meters)!;
  const perUnit = shown.unit === 'mV' || shown.unit === 'mA' ? 0.001 : 1;
  const decimals = shown.text.includes('.') ? shown.text.split('.')[1]!.length : 0;
  return 10 ** -decimals * perUnit;
}

const cache = new Map<string, ReferenceMeasurements>();
function measured(file: string): ReferenceMeasurements {
  let m = cache.get(file);
  if (!m) {
    m = referenceMeasurements(load(file));
    cache.set(file, m);
  }
  return m;
}

const SLOW_MS = 120_000;

describe('reference procedures on the demo library', () => {
  const healthy = files.filter((f) => load(f).faults.length === 0);

  it('has a healthy control', () => {
    expect(healthy.length).toBeGreaterThanOrEqual(1);
  });

  for (const file of healthy) {
    it(
      `${file}: the healthy control passes every test`,
      () => {
        const def = load(file);
        const m = measured(file);
        for (const test of DIAGNOSTIC_TESTS) {
          // Each limit's source is in SOURCE[test].
          expect(m[test].pass, `${test} (${SOURCE[test]}): ${m[test].value} ${m[test].unit}; ${m[test].conditions}`).toBe(true);
        }
        // The figures behind the verdicts, each against its source.
        const r = def.passRules;
        expect(m['battery-ocv'].value).toBeGreaterThanOrEqual(r.socChargedMinV); // BCI table; OEM: Chrysler 2005 300
        expect(m['battery-load'].value).toBeGreaterThanOrEqual(r.batteryLoadMinV); // OEM: Kia Amanti / GM, 9.6 V at 21 °C
        expect(m['regulated-voltage'].value).toBeGreaterThanOrEqual(13.5); // OEM: BMW E38
        expect(m['regulated-voltage'].value).toBeLessThanOrEqual(14.5); // OEM: BMW E38
        expect(m.output.value).toBeGreaterThanOrEqual(outputPassMarkA(r.output, def.vehicle.params.alternator.ratedCurrentA)); // common practice, no source
        expect(Math.abs(m['voltage-drop-positive'].value)).toBeLessThanOrEqual(0.2); // OEM: Hyundai 2017 Azera; check value 11
        expect(Math.abs(m['voltage-drop-ground'].value)).toBeLessThanOrEqual(0.2); // toyotaguru.us; excelauto.com; check value 11
        expect(m.ripple.value).toBeLessThan(0.1); // Tomorrow's Technician; check value 12 (< 0.1 V AC at the battery)
        expect(m['key-off-draw'].value).toBeLessThanOrEqual(0.05); // OEM: Ford 2023 Edge, 25–50 mA
        expect(m.cranking.value).toBeGreaterThanOrEqual(CRANKING_MIN_V); // common practice, no source
      },
      SLOW_MS,
    );
  }

  it('uses the published ripple limit at the battery posts in every scenario', () => {
    // Tomorrow's Technician: replace above 50 mV AC, some cars allow 100 mV.
    for (const file of files) {
      const v = load(file).passRules.maxRippleVac;
      expect(v, file).toBeGreaterThanOrEqual(0.05);
      expect(v, file).toBeLessThanOrEqual(0.1);
    }
  });

  for (const file of files) {
    it(
      `${file}: every expected test has a definite verdict${load(file).faults.length ? ', and the fault fails at least one' : ''}`,
      () => {
        const def = load(file);
        const m = measured(file);
        for (const test of def.testsExpected) {
          const x = m[test];
          // Definite: further from the limit than the display's last digit (half a step either way; common practice, no source).
          const tol = displayStep(QUANTITY[test], x.value);
          expect(Math.abs(x.marginToLimit), `${test}: ${x.value} ${x.unit}, ${x.marginToLimit} from the limit; ${x.conditions}`).toBeGreaterThan(tol);
        }
        if (def.faults.length > 0) {
          const failing = def.testsExpected.filter((t) => !m[t].pass);
          expect(failing.length, `${file}: ${def.testsExpected.map((t) => `${t} ${m[t].value.toFixed(3)} ${m[t].unit}`).join(', ')}`).toBeGreaterThan(0);
        }
      },
      SLOW_MS,
    );
  }

  it(
    'gives the same measurements every time (pure and deterministic)',
    () => {
      const file = files.find((f) => f.startsWith('diode-open')) ?? files[0]!;
      expect(referenceMeasurements(load(file))).toEqual(measured(file));
    },
    SLOW_MS,
  );

  it(
    'sees an open diode in the ripple at the battery',
    () => {
      // Tomorrow's Technician: ripple above 50–100 mV at the battery means a rectifier fault; check value 12.
      const file = files.find((f) => f.startsWith('diode-open'));
      expect(file).toBeDefined();
      const m = measured(file!);
      expect(m.ripple.pass).toBe(false);
      expect(m.ripple.value).toBeGreaterThan(0.1);
    },
    SLOW_MS,
  );
});

/**
 * A meter's resolution in each unit, as the bench shows it (volts to 0.01 V,
 * amperes to 0.1 A, AC volts to 1 mV): a verdict the student is to see must
 * sit at least this far from its limit (common practice, no source).
 */
const RESOLUTION: Readonly<Record<ReferenceMeasurements[DiagnosticTest]['unit'], number>> = { V: 0.01, A: 0.1, 'V AC': 0.001 };
const resolution = (test: DiagnosticTest, unit: ReferenceMeasurements[DiagnosticTest]['unit']) => (test === 'key-off-draw' ? 0.001 : RESOLUTION[unit]);

describe('every library scenario and the whole fault catalogue', () => {
  for (const file of files) {
    it(
      `${file}: the tests its faults do not touch give the healthy verdict, and each test that reveals a fault reveals it`,
      () => {
        // The catalogue's claims (sim/faults.ts) against the reference procedures, each named with its source in
        // server/grading/reference-procedures.ts; the margin is a meter's resolution (common practice, no source).
        const def = load(file);
        const m = measured(file);
        const reveals = new Set(def.faults.flatMap((f) => FAULT_CATALOG[f.kind].revealedBy));
        const mayFail = new Set(def.faults.flatMap((f) => FAULT_CATALOG[f.kind].mayAlsoFail));
        for (const test of DIAGNOSTIC_TESTS) {
          const x = m[test];
          const where = `${test}: ${x.value} ${x.unit} (margin ${x.marginToLimit}); ${x.conditions}`;
          if (!x.runnable) {
            // A running test on a car that does not start: the scenario must not expect it.
            expect(RUNNING_TESTS, where).toContain(test);
            expect(def.testsExpected, where).not.toContain(test);
          } else if (reveals.has(test)) {
            expect(x.marginToLimit, where).toBeLessThanOrEqual(-resolution(test, x.unit));
          } else if (!mayFail.has(test)) {
            expect(x.marginToLimit, where).toBeGreaterThanOrEqual(resolution(test, x.unit));
          }
        }
      },
      SLOW_MS,
    );
  }

  for (const kind of FAULT_KINDS) {
    it(
      `${kind} alone on the default car at its library severity: revealed where the catalogue says, healthy elsewhere`,
      () => {
        const entry = FAULT_CATALOG[kind];
        const m = referenceMeasurements({
          vehicle: { params: defaultVehicleParams() } as ScenarioDefinition['vehicle'],
          passRules: defaultPassRules(),
          faults: [{ id: kind, kind, severity01: entry.librarySeverity01, onsetS: 0, intermittent: null }],
        });
        for (const test of DIAGNOSTIC_TESTS) {
          const x = m[test];
          const where = `${kind} / ${test}: ${x.value} ${x.unit} (margin ${x.marginToLimit}); ${x.conditions}`;
          if (entry.revealedBy.includes(test)) {
            expect(x.runnable, where).toBe(true);
            expect(x.marginToLimit, where).toBeLessThanOrEqual(-resolution(test, x.unit));
          } else if (!entry.mayAlsoFail.includes(test) && x.runnable) {
            expect(x.marginToLimit, where).toBeGreaterThanOrEqual(resolution(test, x.unit));
          }
        }
      },
      SLOW_MS,
    );
  }

  it('uses each fault kind in the library at the severity the catalogue checks, or one where the same tests reveal it', () => {
    for (const file of files) {
      for (const f of load(file).faults) expect(f.severity01, `${file}: ${f.kind}`).toBeGreaterThan(0);
    }
    for (const kind of FAULT_KINDS) expect(files.some((file) => load(file).faults.some((f) => f.kind === kind && f.severity01 === FAULT_CATALOG[kind].librarySeverity01)), kind).toBe(true);
  });
});
