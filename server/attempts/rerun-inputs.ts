/**
 * What the model needs to re-run an attempt on the server: the scenario
 * version's compiled car (the car the bench ran), the seed, the stored log
 * (the model's events and the readings), and the instructor's injections
 * with when the server delivered them (injection-authority.ts decides what
 * of the bench's log of them is taken).
 */
import { asc, eq } from 'drizzle-orm';
import { compileCar, type CompiledCar } from '../../sim/compiled-car.ts';
import { faultChange } from '../../sim/faults.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import { inputEventSchema, logEventSchema, type IntegrityFlag, type LogEvent, type RecordedReading } from '../../shared/api/attempts.ts';
import { pendingActionSchema } from '../../shared/api/live.ts';
import type { ScenarioDefinition } from '../../shared/scenario.ts';
import type { DbOrTx } from '../db/client.ts';
import { attemptEvents, attempts, pendingInjections } from '../db/schema.ts';
import { notFound } from '../http/errors.ts';
import { loadDefinition } from '../library/definitions.ts';
import {
  injectedFaultsAt,
  loggedReadings,
  resolveInjections,
  serverModelEvents,
  type InjectionRecord,
  type LoggedEvent,
  type ResolvedInjection,
} from '../live/injection-authority.ts';

export interface StoredInput extends LoggedEvent {
  source: string;
}

export interface AttemptRunInputs {
  attemptId: number;
  seed: number;
  status: string;
  submittedAtMs: number | null;
  definition: ScenarioDefinition;
  car: CompiledCar;
  /** The stored log, by seq. */
  stored: StoredInput[];
  injections: InjectionRecord[];
}

const KNOWN_KINDS: ReadonlySet<string> = new Set(logEventSchema.options.map((o) => o.shape.kind.value));

/**
 * A stored row as the log's event. The payload is the event; older rows may
 * keep kind and time in columns, and older logs name injected faults as
 * fault events, read here as the changes they make.
 */
export function rowToLogEvent(row: { kind: string; simTimeMs: number; payload: unknown }): LogEvent | null {
  const payload = (typeof row.payload === 'object' && row.payload !== null ? row.payload : {}) as Record<string, unknown>;
  // A row stored by the event log holds the event it validated, with its kind and time also in columns: taken as stored.
  if (payload.kind === row.kind && payload.atMs === row.simTimeMs && typeof row.kind === 'string' && KNOWN_KINDS.has(row.kind)) return payload as unknown as LogEvent;
  const candidate = 'event' in payload && typeof payload.event === 'object' ? payload.event : 'kind' in payload ? payload : { ...payload, kind: row.kind, atMs: row.simTimeMs };
  const parsed = logEventSchema.safeParse(candidate);
  if (parsed.success) return parsed.data as LogEvent;
  const legacy = inputEventSchema.safeParse(candidate);
  if (!legacy.success) return null;
  const e = legacy.data as InputEvent;
  if (e.kind === 'fault-inject') return { kind: 'change-apply', atMs: e.atMs, change: faultChange(e.fault) };
  if (e.kind === 'fault-clear') return { kind: 'change-clear', atMs: e.atMs, changeId: e.faultId };
  return e;
}

const cars = new WeakMap<ScenarioDefinition, CompiledCar>();

/** A scenario version's compiled car (kept per definition object: definitions are frozen and shared). */
export function carOf(def: ScenarioDefinition): CompiledCar {
  let car = cars.get(def);
  if (!car) cars.set(def, (car = compileCar(def.vehicle.params, def.faults, def.vehicle.name)));
  return car;
}

/**
 * What re-runs an attempt: its row (read here unless the caller has it),
 * definition, stored log and injections.
 */
export async function loadAttemptRun(db: DbOrTx, attemptId: number, known?: AttemptRunRow): Promise<AttemptRunInputs> {
  const [a] = known
    ? [known]
    : await db
        .select({ seed: attempts.seed, status: attempts.status, scenarioVersionId: attempts.scenarioVersionId, diagnosis: attempts.diagnosis, result: attempts.result })
        .from(attempts)
        .where(eq(attempts.id, attemptId));
  if (!a) throw notFound('No such attempt');
  const [definition, stored, injections] = await Promise.all([loadDefinition(db, a.scenarioVersionId), loadStoredInputs(db, attemptId), loadInjectionRecords(db, attemptId)]);
  return attemptRunOf(attemptId, a, definition, stored, injections);
}

/** What of an attempt's row a re-run needs. */
export interface AttemptRunRow {
  seed: number;
  status: string;
  scenarioVersionId: number;
  diagnosis: unknown;
  result: unknown;
}

/** The attempt's stored log, by seq (rows that are not an event the log knows are left out). */
export async function loadStoredInputs(db: DbOrTx, attemptId: number): Promise<StoredInput[]> {
  const rows = await db
    .select({
      seq: attemptEvents.seq,
      kind: attemptEvents.kind,
      simTimeMs: attemptEvents.simTimeMs,
      payload: attemptEvents.payload,
      source: attemptEvents.source,
      storedAt: attemptEvents.createdAt,
    })
    .from(attemptEvents)
    .where(eq(attemptEvents.attemptId, attemptId))
    .orderBy(asc(attemptEvents.seq));
  return rows.flatMap((r) => {
    const event = rowToLogEvent(r);
    return event ? [{ seq: r.seq, source: r.source, storedAt: r.storedAt, event }] : [];
  });
}

/** The attempt's injections with their delivery, oldest first. */
export async function loadInjectionRecords(db: DbOrTx, attemptId: number): Promise<InjectionRecord[]> {
  const rows = await db
    .select({
      id: pendingInjections.id,
      action: pendingInjections.action,
      createdAt: pendingInjections.createdAt,
      deliveredAt: pendingInjections.deliveredAt,
      deliveredSimMs: pendingInjections.deliveredSimMs,
    })
    .from(pendingInjections)
    .where(eq(pendingInjections.attemptId, attemptId))
    .orderBy(asc(pendingInjections.id));
  return rows.flatMap((r) => {
    const action = pendingActionSchema.safeParse(r.action);
    return action.success ? [{ ...r, action: action.data }] : [];
  });
}

/** What re-runs an attempt, from its row, its definition, its stored log and its injections. */
export function attemptRunOf(attemptId: number, a: AttemptRunRow, definition: ScenarioDefinition, stored: StoredInput[], injections: InjectionRecord[] = []): AttemptRunInputs {
  return {
    attemptId,
    seed: a.seed,
    status: a.status,
    submittedAtMs: submittedAt(a.diagnosis, a.result),
    definition,
    car: carOf(definition),
    stored,
    injections,
  };
}

/** The server's view of a run: the model's events to run, the readings, and what it made of the injections. */
export interface ServerRun {
  events: InputEvent[];
  readings: RecordedReading[];
  resolved: ResolvedInjection[];
  flags: IntegrityFlag[];
}

/** The events the server runs and the readings it grades (`closing` at a submission: see resolveInjections). */
export function serverRunOf(run: Pick<AttemptRunInputs, 'stored' | 'injections'>, opts: { now: Date; closing: boolean }): ServerRun {
  const resolved = resolveInjections(run.injections, run.stored, opts);
  return {
    events: serverModelEvents(run.stored, resolved),
    readings: loggedReadings(run.stored),
    resolved,
    flags: resolved.flatMap((r) => (r.flag ? [r.flag] : [])),
  };
}

/** The faults the car had at `atMs` in the server's run: the scenario's whose onset has come, and the injections in force. */
export function faultsAt(run: Pick<AttemptRunInputs, 'definition' | 'injections'>, resolved: readonly ResolvedInjection[], atMs: number) {
  const scenario = run.definition.faults.filter((f) => f.onsetS * 1000 <= atMs).map((f) => ({ ...f, intermittent: f.intermittent ?? null }));
  return [...scenario, ...injectedFaultsAt(run.injections, resolved, atMs)];
}

/** The sim time of the submission, from the stored diagnosis or result. */
function submittedAt(diagnosis: unknown, result: unknown): number | null {
  for (const x of [diagnosis, result]) {
    if (typeof x !== 'object' || x === null) continue;
    const o = x as Record<string, unknown>;
    if (typeof o.atMs === 'number') return o.atMs;
    if (typeof o.timeToDiagnosisMs === 'number') return o.timeToDiagnosisMs;
  }
  return null;
}
