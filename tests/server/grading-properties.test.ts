/**
 * A grade means the work was done, over every scenario of the demo library:
 * - the scripted reference student, who sets up each expected test as
 *   shared/test-setups.ts declares it and writes down what the display shows,
 *   scores 100 and is verified;
 * - a submission with the right fault and the right verdicts and no evidence
 *   (no readings, or readings relabelled onto the expected tests) scores at
 *   most 20;
 * - a submission at any moment before the evidence exists cannot be verified.
 * The limits are the product's own (docs/grading.md): common practice, no source.
 */
import { readdirSync, readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { modelEvents, readingsOfLog, type RecordedReading } from '../../shared/api/attempts.ts';
import { restoreScenario, type ScenarioDefinition } from '../../shared/scenario.ts';
import { DIAGNOSTIC_TESTS } from '../../shared/scenario.ts';
import { gradeRun, verdictsFor, type GradeJob } from '../../server/grading/grade-run.ts';
import { referenceStudent, type StudentRun } from './reference-student.ts';

const dir = new URL('../../scenarios/', import.meta.url);
const files = readdirSync(dir).filter((f) => f.endsWith('.json')).sort();
const load = (file: string): ScenarioDefinition => restoreScenario(JSON.parse(readFileSync(new URL(file, dir), 'utf8')));

function job(def: ScenarioDefinition, run: StudentRun, over: Partial<GradeJob> = {}): GradeJob {
  return {
    definition: def,
    car: run.car,
    seed: run.seed,
    events: modelEvents(run.log),
    readings: readingsOfLog(run.log),
    submission: run.submission,
    faults: def.faults.map((f) => ({ ...f, intermittent: f.intermittent ?? null })),
    flags: [],
    mode: 'assigned',
    showFeedback: true,
    showCurve: false,
    ...over,
  };
}

/** The right answer: every expected test's right verdict and the fault. */
function rightAnswer(def: ScenarioDefinition, atMs: number) {
  const correct = verdictsFor(def, def.faults.map((f) => ({ ...f, intermittent: f.intermittent ?? null })));
  return { atMs, diagnosis: { verdicts: def.testsExpected.map((test) => ({ test, pass: correct[test] })), faultKind: def.faults[0]?.kind ?? ('none' as const), notes: '' } };
}

describe('grading over every library scenario', () => {
  for (const file of files) {
    describe(file, () => {
      const def = load(file);
      const run = referenceStudent(def);
      const evidenceTicks = run.readings.map((r) => r.atMs);

      it('the reference student evidences every expected test, scores 100 and is verified', () => {
        expect(run.readings.map((r) => r.test).sort()).toEqual([...def.testsExpected].sort());
        const result = gradeRun(job(def, run));
        const notEvidence = result.readings.filter((r) => !r.evidence).map((r) => `${r.test}: ${r.reason}`);
        expect(notEvidence).toEqual([]);
        expect(result.verdicts.filter((v) => !v.ok).map((v) => v.test)).toEqual([]);
        expect(result.mistakes.filter((m) => m.process)).toEqual([]);
        expect(result.grade).toBe(100);
        expect(result.verified).toBe(true);
      });

      it('the right fault and verdicts with no evidence score at most 20', () => {
        const bare = gradeRun(job(def, run, { readings: [], submission: rightAnswer(def, run.submission.atMs) }));
        expect(bare.grade).toBeLessThanOrEqual(20);
        expect(bare.verified).toBe(false);
        // The attack: readings of other moments and meters, relabelled as each expected test.
        const relabelled: RecordedReading[] = run.readings.flatMap((r, i) =>
          DIAGNOSTIC_TESTS.filter((t) => t !== r.test).map((test) => ({ ...r, id: `relabel-${i}-${test}`, test })),
        );
        const forged = gradeRun(job(def, run, { readings: relabelled.filter((r) => def.testsExpected.includes(r.test)), submission: rightAnswer(def, run.submission.atMs) }));
        expect(forged.grade).toBeLessThanOrEqual(20);
        expect(forged.verified).toBe(false);
      });

      it('a submission at any moment before the evidence exists cannot be verified', () => {
        const lastEvidenceMs = Math.max(...evidenceTicks);
        const at = (t: number) => {
          const log = run.log.filter((e) => e.atMs <= t);
          const truncated: StudentRun = { ...run, log, readings: readingsOfLog(log), submission: rightAnswer(def, t) };
          return gradeRun(job(def, truncated));
        };
        for (const t of [0, 1]) {
          const r = at(t);
          expect(r.verified).toBe(false);
          expect(r.grade).toBeLessThanOrEqual(20);
        }
        fc.assert(
          fc.property(fc.integer({ min: 0, max: lastEvidenceMs - 1 }), (t) => {
            expect(at(t).verified).toBe(false);
          }),
          { numRuns: 2 },
        );
      });
    });
  }
});
