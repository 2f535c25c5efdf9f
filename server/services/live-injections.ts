/**
 * Injections: an instructor's fault (or the clearing of one) for a running
 * attempt, kept in pending_injections until the bench logs it. The bench gets
 * each one sealed with its attempt's key; storing the logged event marks the
 * row applied (a trigger of the `live_notify` migration).
 */
import { and, asc, eq, inArray, isNull, sql } from 'drizzle-orm';
import type { Fault } from '../../sim/faults.ts';
import {
  liveFaultId,
  pendingActionSchema,
  type BenchInjection,
  type InjectionView,
  type PendingAction,
  type injectSchema,
} from '../../shared/api/live.ts';
import { deriveBenchKey, sealFaults } from '../../shared/sealed-faults.ts';
import type { z } from 'zod';
import type { Db, DbOrTx } from '../db/client.ts';
import { attempts, pendingInjections } from '../db/schema.ts';
import { conflict, notFound } from '../http/errors.ts';

type InjectBody = z.output<typeof injectSchema>;

export interface InjectionRow {
  id: number;
  attemptId: number;
  action: PendingAction;
  createdAt: Date;
  appliedAt: Date | null;
}

const injectionColumns = {
  id: pendingInjections.id,
  attemptId: pendingInjections.attemptId,
  action: pendingInjections.action,
  createdAt: pendingInjections.createdAt,
  appliedAt: pendingInjections.appliedAt,
};

function parseRow(row: { id: number; attemptId: number; action: unknown; createdAt: Date; appliedAt: Date | null }): InjectionRow | null {
  const action = pendingActionSchema.safeParse(row.action);
  return action.success ? { ...row, action: action.data } : null;
}

/** The injections of one attempt, oldest first. */
export async function listInjections(db: DbOrTx, attemptId: number): Promise<InjectionRow[]> {
  return (await injectionsByAttempt(db, [attemptId])).get(attemptId) ?? [];
}

/** The injections of several attempts in one query, oldest first per attempt (an attempt with none has no entry). */
export async function injectionsByAttempt(db: DbOrTx, attemptIds: readonly number[]): Promise<Map<number, InjectionRow[]>> {
  const byAttempt = new Map<number, InjectionRow[]>();
  if (attemptIds.length === 0) return byAttempt;
  const where = attemptIds.length === 1 ? eq(pendingInjections.attemptId, attemptIds[0]!) : inArray(pendingInjections.attemptId, [...attemptIds]);
  const rows = await db.select(injectionColumns).from(pendingInjections).where(where).orderBy(asc(pendingInjections.attemptId), asc(pendingInjections.id));
  for (const r of rows) {
    const row = parseRow(r);
    if (!row) continue;
    const list = byAttempt.get(row.attemptId);
    if (list) list.push(row);
    else byAttempt.set(row.attemptId, [row]);
  }
  return byAttempt;
}

export async function unappliedInjections(db: DbOrTx, attemptId: number): Promise<InjectionRow[]> {
  const rows = await db
    .select(injectionColumns)
    .from(pendingInjections)
    .where(and(eq(pendingInjections.attemptId, attemptId), isNull(pendingInjections.appliedAt)))
    .orderBy(asc(pendingInjections.id));
  return rows.flatMap((r) => parseRow(r) ?? []);
}

/** What the instructor sees of the injections of one attempt. */
export function injectionViews(rows: readonly InjectionRow[]): InjectionView[] {
  const clearedIds = new Set(rows.flatMap((r) => (r.action.type === 'clear' ? [r.action.targetInjectionId] : [])));
  return rows.map((r) => ({
    injectionId: r.id,
    type: r.action.type,
    faultId: r.action.faultId,
    kind: r.action.type === 'inject' ? r.action.kind : null,
    severity01: r.action.type === 'inject' ? r.action.severity01 : null,
    delayS: r.action.type === 'inject' ? r.action.delayS : null,
    intermittent: r.action.type === 'inject' ? r.action.intermittent : null,
    createdAt: r.createdAt.toISOString(),
    appliedAt: r.appliedAt ? r.appliedAt.toISOString() : null,
    cleared: r.action.type === 'inject' && clearedIds.has(r.id),
  }));
}

async function lockRunningAttempt(tx: DbOrTx, attemptId: number): Promise<void> {
  const [row] = await tx.select({ status: attempts.status }).from(attempts).where(eq(attempts.id, attemptId)).for('update');
  if (!row) throw notFound('No such attempt');
  if (row.status !== 'running') throw conflict('The attempt is no longer running', 'id');
}

export async function createInjection(db: Db, attemptId: number, createdBy: number, body: InjectBody): Promise<InjectionRow> {
  return db.transaction(async (tx) => {
    await lockRunningAttempt(tx, attemptId);
    const next = await tx.execute<{ id: string }>(sql`select nextval(pg_get_serial_sequence('pending_injections', 'id'))::text as id`);
    const id = Number(next.rows[0]!.id);
    const action: PendingAction = {
      type: 'inject',
      faultId: liveFaultId(id),
      kind: body.kind,
      severity01: body.severity01,
      delayS: body.delayS,
      intermittent: body.intermittent,
    };
    const [row] = await tx.insert(pendingInjections).values({ id, attemptId, action, createdBy }).returning(injectionColumns);
    return parseRow(row!)!;
  });
}

export async function createClear(db: Db, attemptId: number, createdBy: number, targetInjectionId: number): Promise<InjectionRow> {
  return db.transaction(async (tx) => {
    await lockRunningAttempt(tx, attemptId);
    const all = await listInjections(tx, attemptId);
    const target = all.find((r) => r.id === targetInjectionId);
    if (!target || target.action.type !== 'inject') throw notFound('No such injected fault on this attempt');
    if (all.some((r) => r.action.type === 'clear' && r.action.targetInjectionId === targetInjectionId)) {
      throw conflict('That fault is already cleared', 'injectionId');
    }
    const action: PendingAction = { type: 'clear', faultId: target.action.faultId, targetInjectionId };
    const [row] = await tx.insert(pendingInjections).values({ attemptId, action, createdBy }).returning(injectionColumns);
    return parseRow(row!)!;
  });
}

/** The key the attempt's bench opens sealed faults with (the same derivation as the bootstrap's). */
export const benchKeyOf = (secret: string, attemptId: number) => deriveBenchKey(secret, attemptId);

/** An injection as the bench's stream carries it: an inject sealed, so its kind and severity stay unread. */
export async function toBenchMessage(row: InjectionRow, benchKey: string): Promise<BenchInjection> {
  if (row.action.type === 'clear') return { type: 'clear', injectionId: row.id, faultId: row.action.faultId };
  const fault: Fault = {
    id: row.action.faultId,
    kind: row.action.kind,
    severity01: row.action.severity01,
    onsetS: row.action.delayS,
    intermittent: row.action.intermittent,
  };
  return { type: 'inject', injectionId: row.id, faultId: row.action.faultId, sealed: await sealFaults([fault], benchKey) };
}
