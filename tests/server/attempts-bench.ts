/**
 * For the attempt tests: a student's hands at the bench written as event
 * scripts, the meters read the way the bench reads them (the same model run
 * in the test, from the bootstrap), and a scan of responses for the answer key.
 */
import { eq } from 'drizzle-orm';
import { FAULT_KINDS, type DiagnosticTest } from '../../sim/faults.ts';
import { FAULT_TEXT } from '../../shared/fault-catalogue-text.ts';
import type { ConnectionPoint } from '../../sim/inputs.ts';
import { readMeters, type Readings } from '../../sim/instruments.ts';
import { stateAt } from '../../sim/replay.ts';
import { modelEvents, type AttemptBootstrap, type CarInput, type LogEvent, type RecordedReading, type StoredEvent } from '../../shared/api/attempts.ts';
import { meterShows } from '../../shared/meter-display.ts';
import type { AppContext } from '../../server/context.ts';
import { assignments, scenarios } from '../../server/db/schema.ts';

export async function assignmentId(ctx: AppContext, title: string): Promise<number> {
  const [row] = await ctx.db.select({ id: assignments.id }).from(assignments).where(eq(assignments.title, title));
  if (!row) throw new Error(`no demo assignment "${title}"`);
  return row.id;
}

export async function scenarioId(ctx: AppContext, slug: string): Promise<number> {
  const [row] = await ctx.db.select({ id: scenarios.id }).from(scenarios).where(eq(scenarios.slug, slug));
  if (!row) throw new Error(`no demo scenario "${slug}"`);
  return row.id;
}

/** Numbers events from `firstSeq`. */
export const numbered = (events: readonly LogEvent[], firstSeq = 1): StoredEvent[] => events.map((event, i) => ({ seq: firstSeq + i, event }));

/** A reading as the bench logs it, at the moment it shows (or `loggedAtMs`). */
export const readingEvent = (reading: RecordedReading, loggedAtMs = reading.atMs): LogEvent => ({ kind: 'reading', atMs: loggedAtMs, reading });

/** Log events in sim-time order (equal times: in the order given), as a bench logs them. */
export const inTimeOrder = (events: readonly LogEvent[]): LogEvent[] => events.map((e, i) => ({ e, i })).sort((a, b) => a.e.atMs - b.e.atMs || a.i - b.i).map((x) => x.e);

/** Key on, crank, let it fire, then hold `rpm`. */
export function startEngine(atMs: number, rpm: number): CarInput[] {
  return [
    { kind: 'key', atMs, position: 'start' },
    { kind: 'key', atMs: atMs + 2000, position: 'on' },
    { kind: 'rpm', atMs: atMs + 3000, rpm },
  ];
}

export function leads(atMs: number, red: ConnectionPoint | null, black: ConnectionPoint | null): CarInput[] {
  return [
    { kind: 'lead', atMs, which: 'red', point: red },
    { kind: 'lead', atMs, which: 'black', point: black },
  ];
}

/** Turn the pile dial up a step a second from `fromMs`. */
export function pileRamp(fromMs: number, steps: number, perStep: number): CarInput[] {
  return Array.from({ length: steps }, (_, i) => ({ kind: 'pile' as const, atMs: fromMs + i * 1000, dial01: Math.min(1, (i + 1) * perStep) }));
}

/** The car the bench runs (the bootstrap's compiled car), and its meters at a moment of a log. */
export function benchModel(boot: AttemptBootstrap) {
  const { params, changes } = boot.car;
  return {
    params,
    changes,
    meters(events: readonly LogEvent[], atMs: number): Readings {
      const point = stateAt(params, boot.attempt.seed, modelEvents(events), atMs, undefined, changes);
      return readMeters(params, point.state);
    },
  };
}

type Quantity = RecordedReading['quantity'];

/** A reading written down from the display at a tick (shared/meter-display.ts: what the bench shows). */
export function readingFrom(
  meters: (atMs: number) => Readings,
  id: string,
  test: DiagnosticTest,
  quantity: Quantity,
  atMs: number,
  where: string,
): RecordedReading {
  const shown = meterShows(quantity, meters(atMs));
  if (shown === null) throw new Error(`no ${quantity} meter connected at ${atMs} ms`);
  return { id, test, quantity, value: shown.value, unit: shown.unit, atMs, where };
}

/**
 * Every fault kind or label found in a response, leaving out the lists that
 * must name them among others: the diagnosis choices (the answer among
 * distractors) and the family of tests (one test shares its name with a
 * fault kind, "key-off-draw").
 */
export function answerKeyFound(body: unknown): string[] {
  const strip = (x: unknown): unknown => {
    if (Array.isArray(x)) return x.map(strip);
    if (x && typeof x === 'object') {
      return Object.fromEntries(
        Object.entries(x as Record<string, unknown>)
          .filter(([k]) => k !== 'diagnosisChoices' && k !== 'tests')
          .map(([k, v]) => [k, strip(v)]),
      );
    }
    return x;
  };
  const text = JSON.stringify(strip(body));
  const found: string[] = [];
  for (const kind of FAULT_KINDS) {
    if (text.includes(kind)) found.push(kind);
    if (text.toLowerCase().includes(FAULT_TEXT[kind].label.toLowerCase())) found.push(FAULT_TEXT[kind].label);
  }
  // A change's onset may travel (the car's schedule); a fault list, a fault and its severity may not.
  for (const key of ['"faults"', '"severity01"', '"fault"', '"kind":"fault-']) if (text.includes(key)) found.push(key);
  return found;
}
