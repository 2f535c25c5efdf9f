/**
 * For the attempt tests: a student's hands at the bench written as event
 * scripts, the meters read the way the bench reads them (the same model run
 * in the test, from the bootstrap), and a scan of responses for the answer key.
 */
import { eq } from 'drizzle-orm';
import { FAULT_CATALOG, FAULT_KINDS, type DiagnosticTest } from '../../sim/faults.ts';
import type { ConnectionPoint, InputEvent } from '../../sim/inputs.ts';
import { readMeters, type Readings } from '../../sim/instruments.ts';
import { stateAt } from '../../sim/replay.ts';
import type { AttemptBootstrap, RecordedReading, StoredEvent } from '../../shared/api/attempts.ts';
import { unsealFaults, unsealVehicle } from '../../shared/sealed-faults.ts';
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
export const numbered = (events: readonly InputEvent[], firstSeq = 1): StoredEvent[] => events.map((event, i) => ({ seq: firstSeq + i, event }));

/** Key on, crank, let it fire, then hold `rpm`. */
export function startEngine(atMs: number, rpm: number): InputEvent[] {
  return [
    { kind: 'key', atMs, position: 'start' },
    { kind: 'key', atMs: atMs + 2000, position: 'on' },
    { kind: 'rpm', atMs: atMs + 3000, rpm },
  ];
}

export function leads(atMs: number, red: ConnectionPoint | null, black: ConnectionPoint | null): InputEvent[] {
  return [
    { kind: 'lead', atMs, which: 'red', point: red },
    { kind: 'lead', atMs, which: 'black', point: black },
  ];
}

/** Turn the pile dial up a step a second from `fromMs`. */
export function pileRamp(fromMs: number, steps: number, perStep: number): InputEvent[] {
  return Array.from({ length: steps }, (_, i) => ({ kind: 'pile' as const, atMs: fromMs + i * 1000, dial01: Math.min(1, (i + 1) * perStep) }));
}

/** The car the bench runs: the sealed faults at 0 ms and, when sent, the sealed parameters. */
export async function benchModel(boot: AttemptBootstrap) {
  const faults = await unsealFaults(boot.sealedFaults, boot.benchKey);
  const params = boot.sealedVehicle ? await unsealVehicle(boot.sealedVehicle, boot.benchKey) : boot.vehicle;
  const faultEvents: InputEvent[] = faults.map((fault) => ({ kind: 'fault-inject', atMs: 0, fault }));
  return {
    params,
    faults,
    meters(events: readonly InputEvent[], atMs: number): Readings {
      const point = stateAt(params, boot.attempt.seed, [...faultEvents, ...events], atMs);
      return readMeters(params, point.state);
    },
  };
}

type Quantity = RecordedReading['quantity'];
const METER: Record<Quantity, (r: Readings) => number | null> = {
  voltage: (r) => r.voltmeterV,
  current: (r) => r.clampA,
  ripple: (r) => (r.rippleVac === null ? null : r.rippleVac * 1000),
  rpm: (r) => r.tachRpm,
  draw: (r) => (r.ammeterA === null ? null : r.ammeterA * 1000),
};
const UNIT: Record<Quantity, RecordedReading['unit']> = { voltage: 'V', current: 'A', ripple: 'mV', rpm: 'rpm', draw: 'mA' };

/** A reading written down from the meter as the bench shows it, rounded as a student would. */
export function readingFrom(
  meters: (atMs: number) => Readings,
  id: string,
  test: DiagnosticTest,
  quantity: Quantity,
  atMs: number,
  where: string,
): RecordedReading {
  const raw = METER[quantity](meters(atMs));
  if (raw === null) throw new Error(`no ${quantity} meter connected at ${atMs} ms`);
  const digits = quantity === 'voltage' ? 100 : 1;
  return { id, test, quantity, value: Math.round(raw * digits) / digits, unit: UNIT[quantity], atMs, where };
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
    if (text.toLowerCase().includes(FAULT_CATALOG[kind].label.toLowerCase())) found.push(FAULT_CATALOG[kind].label);
  }
  for (const key of ['"faults"', '"severity01"', '"onsetS"', '"fault"']) if (text.includes(key)) found.push(key);
  return found;
}
