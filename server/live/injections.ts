/**
 * Injections: an instructor's fault (or the clearing of one) for a running
 * attempt, kept in pending_injections. The bench's stream sends each as the
 * change it makes to the car (no kind, no severity) and the server records
 * when it delivered it; storing the bench's log of it marks the row applied
 * (a trigger of the migrations). What counts is decided by
 * injection-authority.ts.
 */
import { and, asc, eq, inArray, isNull, sql } from 'drizzle-orm';
import {
  liveFaultId,
  pendingActionSchema,
  type BenchInjection,
  type InjectionView,
  type PendingAction,
  type injectSchema,
} from '../../shared/api/live.ts';
import type { z } from 'zod';
import type { Db, DbOrTx } from '../db/client.ts';
import { attempts, pendingInjections } from '../db/schema.ts';
import { conflict, notFound } from '../http/errors.ts';
import { injectionChange, resolveInjections, type LoggedEvent, type ResolvedInjection } from './injection-authority.ts';

type InjectBody = z.output<typeof injectSchema>;

export interface InjectionRow {
  id: number;
  attemptId: number;
  action: PendingAction;
  createdAt: Date;
  appliedAt: Date | null;
  deliveredAt: Date | null;
  deliveredSimMs: number | null;
}

const injectionColumns = {
  id: pendingInjections.id,
  attemptId: pendingInjections.attemptId,
  action: pendingInjections.action,
  createdAt: pendingInjections.createdAt,
  appliedAt: pendingInjections.appliedAt,
  deliveredAt: pendingInjections.deliveredAt,
  deliveredSimMs: pendingInjections.deliveredSimMs,
};

function parseRow(row: Omit<InjectionRow, 'action'> & { action: unknown }): InjectionRow | null {
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

/**
 * What the instructor sees of the injections of one attempt: each with what
 * the server makes of it (`resolved`, from the attempt's logged changes; when
 * not given, from the rows alone: logged or waiting).
 */
export function injectionViews(rows: readonly InjectionRow[], resolved?: readonly ResolvedInjection[]): InjectionView[] {
  const clearedIds = new Set(rows.flatMap((r) => (r.action.type === 'clear' ? [r.action.targetInjectionId] : [])));
  const byId = new Map((resolved ?? []).map((x) => [x.id, x]));
  return rows.map((r) => ({
    injectionId: r.id,
    type: r.action.type,
    faultId: r.action.faultId,
    kind: r.action.type === 'inject' ? r.action.kind : null,
    severity01: r.action.type === 'inject' ? r.action.severity01 : null,
    delayS: r.action.type === 'inject' ? r.action.delayS : null,
    intermittent: r.action.type === 'inject' ? r.action.intermittent : null,
    createdAt: r.createdAt.toISOString(),
    deliveredAt: r.deliveredAt ? r.deliveredAt.toISOString() : null,
    appliedAt: r.appliedAt ? r.appliedAt.toISOString() : null,
    cleared: r.action.type === 'inject' && clearedIds.has(r.id),
    status: byId.get(r.id)?.status ?? (r.appliedAt ? 'applied' : r.deliveredAt ? 'delivered' : 'waiting'),
    appliedAtMs: byId.get(r.id)?.atMs ?? null,
    flag: (() => {
      const f = byId.get(r.id)?.flag;
      return f ? { kind: f.kind, message: f.message } : null;
    })(),
  }));
}

/** What the server makes of an attempt's injections now, from its rows and the changes its log holds. */
export function resolveRows(rows: readonly InjectionRow[], logged: readonly LoggedEvent[], now = new Date()): ResolvedInjection[] {
  return resolveInjections(rows, logged, { now, closing: false });
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

/** An injection as the bench's stream carries it: the change it makes (onset as a delay from now), never the fault's kind or severity. */
export function toBenchMessage(row: InjectionRow): BenchInjection {
  if (row.action.type === 'clear') return { type: 'clear', injectionId: row.id, changeId: row.action.faultId };
  return { type: 'inject', injectionId: row.id, change: injectionChange(row.action, 0) };
}

/**
 * Records that the server has sent an injection down the bench's stream: the
 * first delivery counts, at the sim time the attempt's log has reached.
 */
export async function markDelivered(db: DbOrTx, row: InjectionRow): Promise<void> {
  await db.execute(sql`
    update pending_injections p
       set delivered_at = now(), delivered_sim_ms = a.sim_time_ms
      from attempts a
     where p.id = ${row.id} and a.id = p.attempt_id and p.delivered_at is null`);
}
