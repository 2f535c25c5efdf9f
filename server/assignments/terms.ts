/**
 * A student's terms on an assignment: its due date and attempts, or the
 * student's own when an instructor has extended them (a later due date,
 * extra attempts).
 */
import { and, eq, inArray } from 'drizzle-orm';
import type { DbOrTx } from '../db/client.ts';
import { assignmentExtensions } from '../db/schema.ts';

export interface Extension {
  dueAt: Date | null;
  extraAttempts: number;
}

export interface Terms {
  dueAt: Date;
  attemptsAllowed: number;
}

export const termsFor = (assignment: Terms, extension: Extension | null | undefined): Terms => ({
  dueAt: extension?.dueAt ?? assignment.dueAt,
  attemptsAllowed: assignment.attemptsAllowed + (extension?.extraAttempts ?? 0),
});

/** One student's extension of one assignment, or null. */
export async function extensionOf(db: DbOrTx, assignmentId: number, userId: number): Promise<Extension | null> {
  const [row] = await db
    .select({ dueAt: assignmentExtensions.dueAt, extraAttempts: assignmentExtensions.extraAttempts })
    .from(assignmentExtensions)
    .where(and(eq(assignmentExtensions.assignmentId, assignmentId), eq(assignmentExtensions.userId, userId)));
  return row ?? null;
}

/** A student's extensions of the given assignments, by assignment id. */
export async function extensionsOfStudent(db: DbOrTx, userId: number, assignmentIds: readonly number[]): Promise<Map<number, Extension>> {
  if (assignmentIds.length === 0) return new Map();
  const rows = await db
    .select({ assignmentId: assignmentExtensions.assignmentId, dueAt: assignmentExtensions.dueAt, extraAttempts: assignmentExtensions.extraAttempts })
    .from(assignmentExtensions)
    .where(and(eq(assignmentExtensions.userId, userId), inArray(assignmentExtensions.assignmentId, [...assignmentIds])));
  return new Map(rows.map((r) => [r.assignmentId, { dueAt: r.dueAt, extraAttempts: r.extraAttempts }]));
}

/** Every extension of one assignment, by student id. */
export async function extensionsOfAssignment(db: DbOrTx, assignmentId: number): Promise<Map<number, Extension>> {
  const rows = await db
    .select({ userId: assignmentExtensions.userId, dueAt: assignmentExtensions.dueAt, extraAttempts: assignmentExtensions.extraAttempts })
    .from(assignmentExtensions)
    .where(eq(assignmentExtensions.assignmentId, assignmentId));
  return new Map(rows.map((r) => [r.userId, { dueAt: r.dueAt, extraAttempts: r.extraAttempts }]));
}
