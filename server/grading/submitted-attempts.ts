/**
 * Submitted attempts of an assignment, read for the class comparison, the
 * sign-offs and the CSV exports. The stored result is read leniently: only the
 * fields these views need, so an older result shape still counts.
 */
import { and, asc, eq, sql } from 'drizzle-orm';
import { z } from 'zod';
import type { DiagnosticTest } from '../../sim/faults.ts';
import { FAULT_KINDS, type FaultKind } from '../../sim/faults.ts';
import { FAULT_TEXT } from '../../shared/fault-catalogue-text.ts';
import type { CompareRow, Distribution } from '../../shared/api/compare.ts';
import { COMPETENCIES, COMPETENCY_LABELS } from '../../shared/competencies.ts';
import { NO_FAULT_LABEL } from '../../shared/scenario.ts';
import type { DbOrTx } from '../db/client.ts';
import { assignments, attempts, classes, enrollments, scenarioVersions, users } from '../db/schema.ts';
import { notFound } from '../http/errors.ts';
import { loadDefinition } from '../library/definitions.ts';
import type { ResultShowing } from './result-views.ts';

const storedResultSchema = z.object({
  timeToDiagnosisMs: z.number().optional(),
  flags: z.array(z.object({ kind: z.string() }).loose()).optional(),
  fault: z.object({ given: z.string(), actual: z.array(z.string()), ok: z.boolean() }).partial().optional(),
  verdicts: z.array(z.object({ test: z.enum(COMPETENCIES), ok: z.boolean() }).loose()).optional(),
  mistakes: z.array(z.object({ kind: z.string() }).loose()).optional(),
  hints: z.object({ opened: z.number() }).loose().optional(),
});
export type StoredResult = z.infer<typeof storedResultSchema>;

export function readResult(raw: unknown): StoredResult {
  const r = storedResultSchema.safeParse(raw);
  return r.success ? r.data : {};
}

export function faultLabel(kind: string): string {
  if (kind === 'none') return NO_FAULT_LABEL;
  return (FAULT_KINDS as readonly string[]).includes(kind) ? FAULT_TEXT[kind as FaultKind].label : kind;
}

export interface SubmittedAttempt {
  attemptId: number;
  scenarioVersionId: number;
  scenarioTitle: string;
  /** The labels of the drawn version's faults. */
  drawnFault: string;
  studentId: number;
  studentName: string;
  studentEmail: string;
  submittedAt: Date | null;
  grade: number | null;
  verified: boolean;
  timeToDiagnosisMs: number | null;
  result: StoredResult;
}

export async function assignmentHeader(db: DbOrTx, assignmentId: number) {
  const [row] = await db
    .select({
      assignmentId: assignments.id,
      title: assignments.title,
      classId: assignments.classId,
      className: classes.name,
      scenarioTitle: scenarioVersions.title,
    })
    .from(assignments)
    .innerJoin(classes, eq(classes.id, assignments.classId))
    .innerJoin(scenarioVersions, eq(scenarioVersions.id, assignments.scenarioVersionId))
    .where(eq(assignments.id, assignmentId));
  if (!row) throw notFound('No such assignment');
  const [enrolled] = await db.select({ n: sql<number>`count(*)::int` }).from(enrollments).where(eq(enrollments.classId, row.classId));
  const [submitted] = await db
    .select({ n: sql<number>`count(distinct ${attempts.userId})::int` })
    .from(attempts)
    .where(and(eq(attempts.assignmentId, assignmentId), eq(attempts.status, 'submitted')));
  return { ...row, enrolled: enrolled?.n ?? 0, submitted: submitted?.n ?? 0 };
}

/** Every submitted attempt of the assignment, by student name then attempt. */
export async function submittedAttempts(db: DbOrTx, assignmentId: number): Promise<SubmittedAttempt[]> {
  const rows = await db
    .select({
      attemptId: attempts.id,
      scenarioVersionId: attempts.scenarioVersionId,
      scenarioTitle: scenarioVersions.title,
      studentId: attempts.userId,
      studentName: users.name,
      studentEmail: users.email,
      submittedAt: attempts.submittedAt,
      grade: attempts.grade,
      verified: attempts.verified,
      timeToDiagnosisMs: attempts.timeToDiagnosisMs,
      result: attempts.result,
    })
    .from(attempts)
    .innerJoin(users, eq(users.id, attempts.userId))
    .innerJoin(scenarioVersions, eq(scenarioVersions.id, attempts.scenarioVersionId))
    .where(and(eq(attempts.assignmentId, assignmentId), eq(attempts.status, 'submitted')))
    .orderBy(asc(users.name), asc(attempts.id));
  const drawn = new Map<number, string>();
  for (const id of new Set(rows.map((r) => r.scenarioVersionId))) {
    const def = await loadDefinition(db, id);
    drawn.set(id, def.faults.length ? [...new Set(def.faults.map((f) => faultLabel(f.kind)))].join('; ') : NO_FAULT_LABEL);
  }
  return rows.map((r) => {
    const result = readResult(r.result);
    return {
      ...r,
      drawnFault: drawn.get(r.scenarioVersionId)!,
      result,
      timeToDiagnosisMs: r.timeToDiagnosisMs ?? (result.timeToDiagnosisMs !== undefined ? Math.round(result.timeToDiagnosisMs) : null),
    };
  });
}

/** The counted rows grouped by the fault each student drew (an assignment's pool), in order of first appearance. */
export function drawnGroups(rows: readonly CompareRow[], counted: readonly SubmittedAttempt[]) {
  const groups = new Map<string, { drawnFault: string; scenarioVersionId: number; scenarioTitle: string; rows: CompareRow[] }>();
  for (const row of rows) {
    const a = counted.find((c) => c.attemptId === row.attemptId);
    if (!a) continue;
    const key = `${a.scenarioVersionId}`;
    const g = groups.get(key) ?? { drawnFault: a.drawnFault, scenarioVersionId: a.scenarioVersionId, scenarioTitle: a.scenarioTitle, rows: [] };
    g.rows.push(row);
    groups.set(key, g);
  }
  return [...groups.values()].map((g) => ({
    drawnFault: g.drawnFault,
    scenarioVersionId: g.scenarioVersionId,
    scenarioTitle: g.scenarioTitle,
    students: g.rows.length,
    correct: g.rows.filter((r) => r.correct === true).length,
    medianMs: distribution(g.rows, null).medianMs,
  }));
}

/** Each student's latest submitted attempt, as a comparison row. */
export function countedRows(all: readonly SubmittedAttempt[]): CompareRow[] {
  const byStudent = new Map<number, SubmittedAttempt[]>();
  for (const a of all) byStudent.set(a.studentId, [...(byStudent.get(a.studentId) ?? []), a]);
  return [...byStudent.values()].map((list) => {
    const latest = [...list].sort((x, y) => (x.submittedAt?.getTime() ?? 0) - (y.submittedAt?.getTime() ?? 0) || x.attemptId - y.attemptId).at(-1)!;
    return toRow(latest, list.length);
  });
}

export function toRow(a: SubmittedAttempt, attemptCount: number): CompareRow {
  const mistakes = a.result.mistakes ?? [];
  return {
    attemptId: a.attemptId,
    studentId: a.studentId,
    studentName: a.studentName,
    submittedAt: a.submittedAt ? a.submittedAt.toISOString() : null,
    attemptCount,
    timeToDiagnosisMs: a.timeToDiagnosisMs,
    correct: a.result.fault?.ok ?? null,
    faultGiven: a.result.fault?.given ?? null,
    grade: a.grade,
    verified: a.verified,
    mistakes: mistakes.length,
    mistakeKinds: [...new Set(mistakes.map((m) => m.kind))],
    drawnFault: a.drawnFault,
    flagged: (a.result.flags?.length ?? 0) > 0,
    hintsOpened: a.result.hints?.opened ?? null,
  };
}

export function distribution(rows: readonly CompareRow[], mine: CompareRow | null): Distribution {
  const timesMs = rows.flatMap((r) => (r.timeToDiagnosisMs === null ? [] : [r.timeToDiagnosisMs])).sort((a, b) => a - b);
  const mineMs = mine?.timeToDiagnosisMs ?? null;
  const n = timesMs.length;
  const medianMs = n === 0 ? null : n % 2 ? timesMs[(n - 1) / 2]! : (timesMs[n / 2 - 1]! + timesMs[n / 2]!) / 2;
  return { timesMs, mineMs, myPlace: mineMs === null ? null : timesMs.filter((t) => t < mineMs).length + 1, medianMs };
}

export function accuracyByFault(counted: readonly SubmittedAttempt[]) {
  const tally = new Map<string, { attempts: number; named: number }>();
  for (const a of counted) {
    const given = a.result.fault?.given;
    for (const kind of new Set(a.result.fault?.actual ?? [])) {
      const t = tally.get(kind) ?? { attempts: 0, named: 0 };
      t.attempts++;
      if (given === kind) t.named++;
      tally.set(kind, t);
    }
  }
  return [...tally.entries()].map(([fault, t]) => ({ fault, label: faultLabel(fault), ...t }));
}

export function accuracyByTest(counted: readonly SubmittedAttempt[]) {
  const tally = new Map<DiagnosticTest, { verdicts: number; right: number }>();
  for (const a of counted) {
    for (const v of a.result.verdicts ?? []) {
      const t = tally.get(v.test) ?? { verdicts: 0, right: 0 };
      t.verdicts++;
      if (v.ok) t.right++;
      tally.set(v.test, t);
    }
  }
  return COMPETENCIES.flatMap((test) => {
    const t = tally.get(test);
    return t ? [{ test, label: COMPETENCY_LABELS[test], ...t }] : [];
  });
}

/** A CSV cell that a spreadsheet will not run as a formula. */
export function csvCell(v: string | number | boolean | null): string {
  if (v === null) return '';
  if (typeof v !== 'string') return String(v);
  const safe = /^[=+\-@\t\r]/.test(v) ? `'${v}` : v;
  return /[",\n\r]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

export function toCsv(header: readonly string[], rows: readonly (readonly (string | number | boolean | null)[])[]): string {
  return [header.join(','), ...rows.map((r) => r.map(csvCell).join(','))].join('\r\n') + '\r\n';
}

/** When an assignment's results are shown to its students. */
export async function assignmentShowing(db: DbOrTx, assignmentId: number): Promise<ResultShowing> {
  const [showing] = await db
    .select({ showFeedbackAfter: assignments.showFeedbackAfter, dueAt: assignments.dueAt })
    .from(assignments)
    .where(and(eq(assignments.id, assignmentId)));
  return { mode: 'assigned', showFeedbackAfter: showing?.showFeedbackAfter ?? true, dueAt: showing?.dueAt ?? null };
}
