/**
 * The fault x test table: every catalogue fault alone on the default car at
 * the severity the library uses, every test of the family run by its
 * reference procedure, the reading as a student's meter shows it. The model
 * docs print it for instructors; the tests check that every pair of faults
 * is told apart by at least one test, by a margin a student can see.
 */
import type { DiagnosticTest, FaultKind } from '../../sim/faults.ts';
import { FAULT_CATALOG, FAULT_KINDS } from '../../sim/faults.ts';
import { FAULT_TEXT } from '../../shared/fault-catalogue-text.ts';
import type { VehicleParams } from '../../sim/params.ts';
import { defaultVehicleParams } from '../../sim/params.ts';
import { referenceMeasurements, type ReferenceMeasurement } from './reference-procedures.ts';
import { DIAGNOSTIC_TESTS, DIAGNOSTIC_TEST_LABELS, defaultPassRules } from '../../shared/scenario.ts';

/** How far two readings of a unit must be apart for a student to tell them apart on the bench. */
export const DISTINGUISHING_MARGIN: Readonly<Record<ReferenceMeasurement['unit'] | 'draw', number>> = {
  V: 0.1,
  A: 5,
  'V AC': 0.1,
  draw: 0.02,
};

/** A reading as the meter shows it: volts to 0.01 V, amperes to 0.1 A, AC volts to 1 mV, the draw to 1 mA; null when the test cannot be run. */
export interface TableCell {
  value: number | null;
  unit: ReferenceMeasurement['unit'];
  pass: boolean;
}

export type DiagnosisTable = Record<FaultKind | 'none', Record<DiagnosticTest, TableCell>>;

const shown = (test: DiagnosticTest, m: ReferenceMeasurement): number => {
  const digits = test === 'key-off-draw' || m.unit === 'V AC' ? 3 : m.unit === 'A' ? 1 : 2;
  return Number(m.value.toFixed(digits));
};

export function diagnosisTable(params: VehicleParams = defaultVehicleParams()): DiagnosisTable {
  const rules = defaultPassRules();
  const out = {} as DiagnosisTable;
  for (const kind of ['none', ...FAULT_KINDS] as const) {
    const faults = kind === 'none' ? [] : [{ id: kind, kind, severity01: FAULT_CATALOG[kind].librarySeverity01, onsetS: 0, intermittent: null }];
    const m = referenceMeasurements({ vehicle: { params } as never, passRules: rules, faults });
    const row = {} as Record<DiagnosticTest, TableCell>;
    for (const test of DIAGNOSTIC_TESTS) row[test] = { value: m[test].runnable ? shown(test, m[test]) : null, unit: m[test].unit, pass: m[test].pass };
    out[kind] = row;
  }
  return out;
}

/** Whether two cells differ by at least the margin a student can see (a test that runs on one car and not the other always differs). */
export function cellsDiffer(test: DiagnosticTest, a: TableCell, b: TableCell): boolean {
  if (a.value === null || b.value === null) return a.value !== b.value;
  const margin = test === 'key-off-draw' ? DISTINGUISHING_MARGIN.draw : DISTINGUISHING_MARGIN[a.unit];
  return Math.abs(a.value - b.value) >= margin - 1e-9;
}

const SHORT: Readonly<Record<DiagnosticTest, string>> = {
  'battery-ocv': 'OCV (V)',
  'battery-load': 'Load test (V)',
  'regulated-voltage': 'Regulated (V)',
  output: 'Output (A)',
  'voltage-drop-positive': 'Drop + (V)',
  'voltage-drop-ground': 'Drop − (V)',
  ripple: 'Ripple (V AC)',
  'key-off-draw': 'Draw (A)',
  cranking: 'Cranking (V)',
};

/** The table as Markdown for docs/model.md: failing readings in bold, tests that cannot be run as "no start". */
export function diagnosisTableMarkdown(table: DiagnosisTable): string {
  const head = `| fault (library severity) | ${DIAGNOSTIC_TESTS.map((t) => SHORT[t]).join(' | ')} |`;
  const rule = `| --- | ${DIAGNOSTIC_TESTS.map(() => '---:').join(' | ')} |`;
  const rows = (['none', ...FAULT_KINDS] as const).map((kind) => {
    const name = kind === 'none' ? 'healthy' : `${FAULT_TEXT[kind].label} (${FAULT_CATALOG[kind].librarySeverity01})`;
    const cells = DIAGNOSTIC_TESTS.map((t) => {
      const c = table[kind][t];
      if (c.value === null) return 'no start';
      const digits = t === 'key-off-draw' || c.unit === 'V AC' ? 3 : c.unit === 'A' ? 1 : 2;
      const text = c.value.toFixed(digits);
      return c.pass ? text : `**${text}**`;
    });
    return `| ${name} | ${cells.join(' | ')} |`;
  });
  return [head, rule, ...rows].join('\n');
}

/** Column headings spelled out, for the docs' legend. */
export const TABLE_TEST_NAMES: Readonly<Record<DiagnosticTest, string>> = DIAGNOSTIC_TEST_LABELS;
