/**
 * The fault x test table (server/grading/diagnosis-table.ts): every catalogue fault
 * at its library severity on the default car, every test of the family by
 * its reference procedure, readings as the meter shows them. Every pair of
 * faults must be told apart by at least one test, by a margin a student sees
 * on the bench (0.1 V, 5 A, 0.1 V AC, 20 mA: common practice, no source), and
 * docs/model.md must show the same table to instructors.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { FAULT_KINDS } from '../../sim/faults.ts';
import { cellsDiffer, diagnosisTable, diagnosisTableMarkdown } from '../../server/grading/diagnosis-table.ts';
import { DIAGNOSTIC_TESTS } from '../../shared/scenario.ts';

const table = diagnosisTable();

describe('the fault x test table', () => {
  it('tells every pair of catalogue faults apart by at least one test', () => {
    const together: string[] = [];
    for (let i = 0; i < FAULT_KINDS.length; i++) {
      for (let j = i + 1; j < FAULT_KINDS.length; j++) {
        const a = FAULT_KINDS[i]!;
        const b = FAULT_KINDS[j]!;
        if (!DIAGNOSTIC_TESTS.some((t) => cellsDiffer(t, table[a][t], table[b][t]))) together.push(`${a} / ${b}`);
      }
    }
    expect(together).toEqual([]);
  });

  it('tells every catalogue fault from a healthy car by a failing test', () => {
    for (const kind of FAULT_KINDS) {
      expect(DIAGNOSTIC_TESTS.some((t) => !table[kind][t].pass && table[kind][t].value !== null), kind).toBe(true);
    }
    expect(DIAGNOSTIC_TESTS.every((t) => table.none[t].pass)).toBe(true);
  });

  it('is the table docs/model.md shows instructors', () => {
    const doc = readFileSync(new URL('../../docs/model.md', import.meta.url), 'utf8');
    expect(doc).toContain(diagnosisTableMarkdown(table));
  });
});
