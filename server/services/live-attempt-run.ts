/**
 * What the model needs to re-run an attempt on the server: the scenario
 * version's vehicle, the seed, and the input events in log order, starting
 * with the scenario's own faults at 0 ms (as the bench and the grader do).
 */
import { asc, eq } from 'drizzle-orm';
import type { InputEvent } from '../../sim/inputs.ts';
import type { VehicleParams } from '../../sim/params.ts';
import { inputEventSchema } from '../../shared/api/attempts.ts';
import type { ScenarioDefinition } from '../../shared/scenario.ts';
import type { DbOrTx } from '../db/client.ts';
import { attemptEvents, attempts } from '../db/schema.ts';
import { notFound } from '../http/errors.ts';
import { loadDefinition } from './definitions.ts';

export interface StoredInput {
  seq: number;
  source: string;
  event: InputEvent;
}

export interface AttemptRunInputs {
  attemptId: number;
  seed: number;
  status: string;
  submittedAtMs: number | null;
  definition: ScenarioDefinition;
  params: VehicleParams;
  /** The scenario's faults as fault-inject events at 0 ms. */
  scenarioEvents: InputEvent[];
  /** The stored log, by seq. */
  stored: StoredInput[];
  /** scenarioEvents then the stored log: what the model runs. */
  events: InputEvent[];
}

const KNOWN_KINDS: ReadonlySet<string> = new Set(inputEventSchema.options.map((o) => o.shape.kind.value));

/** A stored row as the model's event (the payload is the event; older rows may keep kind and time in columns). */
export function rowToInput(row: { kind: string; simTimeMs: number; payload: unknown }): InputEvent | null {
  const payload = (typeof row.payload === 'object' && row.payload !== null ? row.payload : {}) as Record<string, unknown>;
  // A row stored by the event log holds the event it validated, with its kind and time also in columns: taken as stored.
  if (payload.kind === row.kind && payload.atMs === row.simTimeMs && typeof row.kind === 'string' && KNOWN_KINDS.has(row.kind)) return payload as unknown as InputEvent;
  const candidate = 'event' in payload && typeof payload.event === 'object' ? payload.event : 'kind' in payload ? payload : { ...payload, kind: row.kind, atMs: row.simTimeMs };
  const parsed = inputEventSchema.safeParse(candidate);
  return parsed.success ? parsed.data : null;
}

export function scenarioFaultEvents(def: Pick<ScenarioDefinition, 'faults'>): InputEvent[] {
  return def.faults.map((f) => ({
    kind: 'fault-inject' as const,
    atMs: 0,
    fault: { id: f.id, kind: f.kind, severity01: f.severity01, onsetS: f.onsetS, intermittent: f.intermittent ?? null },
  }));
}

/**
 * What re-runs an attempt: its row (read here unless the caller has it),
 * definition and stored log.
 */
export async function loadAttemptRun(
  db: DbOrTx,
  attemptId: number,
  known?: AttemptRunRow,
): Promise<AttemptRunInputs> {
  const [a] = known
    ? [known]
    : await db
        .select({ seed: attempts.seed, status: attempts.status, scenarioVersionId: attempts.scenarioVersionId, diagnosis: attempts.diagnosis, result: attempts.result })
        .from(attempts)
        .where(eq(attempts.id, attemptId));
  if (!a) throw notFound('No such attempt');
  const [definition, stored] = await Promise.all([loadDefinition(db, a.scenarioVersionId), loadStoredInputs(db, attemptId)]);
  return attemptRunOf(attemptId, a, definition, stored);
}

/** What of an attempt's row a re-run needs. */
export interface AttemptRunRow {
  seed: number;
  status: string;
  scenarioVersionId: number;
  diagnosis: unknown;
  result: unknown;
}

/** The attempt's stored log, by seq (rows that are not an event the model knows are left out). */
export async function loadStoredInputs(db: DbOrTx, attemptId: number): Promise<StoredInput[]> {
  const rows = await db
    .select({ seq: attemptEvents.seq, kind: attemptEvents.kind, simTimeMs: attemptEvents.simTimeMs, payload: attemptEvents.payload, source: attemptEvents.source })
    .from(attemptEvents)
    .where(eq(attemptEvents.attemptId, attemptId))
    .orderBy(asc(attemptEvents.seq));
  return rows.flatMap((r) => {
    const event = rowToInput(r);
    return event ? [{ seq: r.seq, source: r.source, event }] : [];
  });
}

/** What re-runs an attempt, from its row, its definition and its stored log. */
export function attemptRunOf(attemptId: number, a: AttemptRunRow, definition: ScenarioDefinition, stored: StoredInput[]): AttemptRunInputs {
  const scenarioEvents = scenarioFaultEvents(definition);
  return {
    attemptId,
    seed: a.seed,
    status: a.status,
    submittedAtMs: submittedAt(a.diagnosis, a.result),
    definition,
    params: definition.vehicle.params,
    scenarioEvents,
    stored,
    events: [...scenarioEvents, ...stored.map((s) => s.event)],
  };
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
