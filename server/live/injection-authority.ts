/**
 * The server is the authority on what an instructor injected and when. An
 * injection counts from the moment the server delivered it down the bench's
 * stream; the bench acknowledges it by logging the change (change-apply or
 * change-clear, its id the injection's fault id) at its own sim time, with
 * the onset the instructor asked for counted from there.
 *
 * The bench's log is taken as it stands when it logged the injection within
 * ACK_BOUND_MS of the delivery, no earlier in sim time than the log was when
 * the injection was delivered, with the instructor's onset, and after the
 * injections delivered before it. Otherwise the attempt is flagged, and the
 * re-runs (grading, the board, the replay) apply the server's event instead:
 * at the sim time of the log when it was delivered (or at the bench's own
 * moment when only the onset was wrong), in the order of delivery.
 *
 * Pure: the injection rows and the logged changes come in; what to run and
 * what to flag goes out.
 */
import type { Fault } from '../../sim/faults.ts';
import { faultOps } from '../../sim/faults.ts';
import { sameEffect, type CarChange } from '../../sim/car-changes.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import { orderEvents } from '../../sim/replay.ts';
import type { IntegrityFlag, LogEvent, RecordedReading } from '../../shared/api/attempts.ts';
import { modelEvents, readingsOfLog } from '../../shared/api/attempts.ts';
import type { PendingAction } from '../../shared/api/live.ts';

/** How long after delivery the bench has to log an injection (its outbox retries for about this long). */
export const ACK_BOUND_MS = 30_000;

export interface InjectionRecord {
  id: number;
  action: PendingAction;
  createdAt: Date;
  deliveredAt: Date | null;
  deliveredSimMs: number | null;
}

/** An event of the stored log with when it was stored. */
export interface LoggedEvent {
  seq: number;
  storedAt: Date;
  event: LogEvent;
}

export type InjectionStatus = 'waiting' | 'delivered' | 'applied' | 'flagged';

export interface ResolvedInjection {
  id: number;
  status: InjectionStatus;
  /** The sim time it applies from in the server's runs (null while waiting for delivery or for the bench's log). */
  atMs: number | null;
  /** The seq of the bench's log of it, when that is taken as it stands. */
  benchSeq: number | null;
  /** The server's own event, when the bench's log is not taken. */
  serverEvent: InputEvent | null;
  flag: IntegrityFlag | null;
}

/** The change an injection makes, its onset counted from `fromMs`. */
export function injectionChange(action: Extract<PendingAction, { type: 'inject' }>, fromMs: number): CarChange {
  return { id: action.faultId, onsetS: fromMs / 1000 + action.delayS, intermittent: action.intermittent, ops: faultOps(action) };
}

const secs = (ms: number) => `${(ms / 1000).toFixed(1)} s`;

function loggedOf(action: PendingAction, logged: readonly LoggedEvent[]): LoggedEvent | null {
  for (const l of logged) {
    const e = l.event;
    if (action.type === 'inject' && e.kind === 'change-apply' && e.change.id === action.faultId) return l;
    if (action.type === 'clear' && e.kind === 'change-clear' && e.changeId === action.faultId) return l;
  }
  return null;
}

/**
 * What the server makes of each injection, in order of delivery (those not
 * delivered yet last). `closing`
 * (a submission) takes every delivered injection the bench has not logged as
 * not logged, however recent.
 */
export function resolveInjections(records: readonly InjectionRecord[], logged: readonly LoggedEvent[], opts: { now: Date; closing: boolean }): ResolvedInjection[] {
  const delivered = records
    .filter((r) => r.deliveredAt !== null)
    .sort((a, b) => a.deliveredAt!.getTime() - b.deliveredAt!.getTime() || a.id - b.id);
  const out: ResolvedInjection[] = [];
  let lastAtMs = 0;
  for (const r of delivered) {
    const deliveredAt = r.deliveredAt!;
    const floorMs = r.deliveredSimMs ?? 0;
    const log = loggedOf(r.action, logged);
    const flagged = (kind: IntegrityFlag['kind'], atMs: number, message: string): ResolvedInjection => {
      const serverEvent: InputEvent =
        r.action.type === 'inject' ? { kind: 'change-apply', atMs, change: injectionChange(r.action, atMs) } : { kind: 'change-clear', atMs, changeId: r.action.faultId };
      return { id: r.id, status: 'flagged', atMs, benchSeq: null, serverEvent, flag: { kind, injectionId: r.id, appliedAtMs: atMs, message } };
    };
    let res: ResolvedInjection;
    if (!log) {
      const waited = opts.now.getTime() - deliveredAt.getTime();
      if (waited <= ACK_BOUND_MS && !opts.closing) {
        out.push({ id: r.id, status: 'delivered', atMs: null, benchSeq: null, serverEvent: null, flag: null });
        continue;
      }
      const atMs = Math.max(floorMs, lastAtMs);
      res = flagged('injection-not-logged', atMs, `The bench did not log the instructor’s injection #${r.id}; it was graded as applied when the server delivered it (${secs(atMs)} of sim time).`);
    } else {
      const e = log.event;
      const lateMs = log.storedAt.getTime() - deliveredAt.getTime();
      const expected = r.action.type === 'inject' ? injectionChange(r.action, e.atMs) : null;
      const otherOnset = expected !== null && e.kind === 'change-apply' && (Math.abs(e.change.onsetS - expected.onsetS) > 1e-6 || !sameEffect(e.change, expected));
      if (lateMs > ACK_BOUND_MS || e.atMs < floorMs) {
        const atMs = Math.max(floorMs, lastAtMs);
        res = flagged(
          'injection-logged-late',
          atMs,
          lateMs > ACK_BOUND_MS
            ? `The bench logged the instructor’s injection #${r.id} ${Math.round(lateMs / 1000)} s after the server delivered it; it was graded as applied on delivery (${secs(atMs)} of sim time).`
            : `The bench logged the instructor’s injection #${r.id} at a moment before it was delivered; it was graded as applied on delivery (${secs(atMs)} of sim time).`,
        );
      } else if (e.atMs < lastAtMs) {
        res = flagged('injection-out-of-order', lastAtMs, `The bench logged the instructor’s injection #${r.id} before one delivered earlier; it was graded in the order of delivery (${secs(lastAtMs)} of sim time).`);
      } else if (otherOnset) {
        res = flagged('injection-other-onset', e.atMs, `The bench logged the instructor’s injection #${r.id} with another onset; it was graded with the instructor’s delay from ${secs(e.atMs)} of sim time.`);
      } else {
        res = { id: r.id, status: 'applied', atMs: e.atMs, benchSeq: log.seq, serverEvent: null, flag: null };
      }
    }
    lastAtMs = Math.max(lastAtMs, res.atMs ?? 0);
    out.push(res);
  }
  // Delivered ones in order of delivery, then the others: waiting to be, or (logs from before delivery was recorded) logged with no delivery on record, taken as logged.
  for (const r of records) {
    if (r.deliveredAt !== null) continue;
    const log = loggedOf(r.action, logged);
    out.push(log ? { id: r.id, status: 'applied', atMs: log.event.atMs, benchSeq: log.seq, serverEvent: null, flag: null } : { id: r.id, status: 'waiting', atMs: null, benchSeq: null, serverEvent: null, flag: null });
  }
  return out;
}

/**
 * The model's events the server runs: the log's own, less the bench's logs
 * of injections it does not take (and of any change it knows nothing of),
 * with its own events for those, in time order (equal times: the log's first,
 * then the server's in order of delivery).
 */
export function serverModelEvents(stored: readonly LoggedEvent[], resolved: readonly ResolvedInjection[]): InputEvent[] {
  const taken = new Set(resolved.flatMap((r) => (r.benchSeq === null ? [] : [r.benchSeq])));
  const kept: InputEvent[] = [];
  for (const s of stored) {
    const e = s.event;
    if ((e.kind === 'change-apply' || e.kind === 'change-clear') && !taken.has(s.seq)) continue;
    kept.push(...modelEvents([e]));
  }
  const mine = resolved.filter((r) => r.serverEvent !== null).sort((a, b) => a.atMs! - b.atMs!);
  return mine.length === 0 ? kept : [...orderEvents([...kept, ...mine.map((r) => r.serverEvent!)])];
}

/** The readings of the stored log. */
export function loggedReadings(stored: readonly LoggedEvent[]): RecordedReading[] {
  return readingsOfLog(stored.map((s) => s.event));
}

/** The injected faults in force at `atMs` in the server's runs (for the verdicts and the fault named). */
export function injectedFaultsAt(records: readonly InjectionRecord[], resolved: readonly ResolvedInjection[], atMs: number): Fault[] {
  const byId = new Map(resolved.map((r) => [r.id, r]));
  const inForce = new Map<string, Fault>();
  const steps = records
    .map((r) => ({ r, at: byId.get(r.id)?.atMs ?? null }))
    .filter((x): x is { r: InjectionRecord; at: number } => x.at !== null && x.at <= atMs)
    .sort((a, b) => a.at - b.at || a.r.id - b.r.id);
  for (const { r, at } of steps) {
    if (r.action.type === 'inject') {
      const a = r.action;
      inForce.set(a.faultId, { id: a.faultId, kind: a.kind, severity01: a.severity01, onsetS: at / 1000 + a.delayS, intermittent: a.intermittent });
    } else inForce.delete(r.action.faultId);
  }
  return [...inForce.values()].filter((f) => f.onsetS * 1000 <= atMs);
}
