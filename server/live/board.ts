/**
 * The class board: every running attempt of a class's assignments (a
 * student's practice is their own and never shows) with the student,
 * scenario, sim time, the test the bench is set up for, the meters as the
 * server's own re-run of the stored events shows them (on the attempt's
 * compiled car, as the bench ran it), the readings recorded so far, and each
 * injection with what the server makes of it (delivered, logged by the bench,
 * or flagged). A refresh handles every changed attempt at once:
 * one query for their rows (with the time of each one's latest event), one
 * for the events the re-run cache has not seen yet, one for their injections.
 * The re-run is kept per attempt and carried forward as events arrive, so an
 * update costs only the new events and the new sim time.
 */
import { and, eq, inArray, sql } from 'drizzle-orm';
import type { DiagnosticTest } from '../../sim/faults.ts';
import type { Controls, InputEvent } from '../../sim/inputs.ts';
import type { Readings } from '../../sim/instruments.ts';
import { readMeters } from '../../sim/instruments.ts';
import { orderEvents } from '../../sim/replay.ts';
import { DT_MS } from '../../sim/step.ts';
import { isNoteEvent, readingsOfLog, type LogEvent } from '../../shared/api/attempts.ts';
import type { BoardAttempt, LiveReadings } from '../../shared/api/live.ts';
import type { DbOrTx } from '../db/client.ts';
import { assignments, attemptEvents, attempts, classes, pendingInjections, scenarioVersions, users } from '../db/schema.ts';
import { notFound } from '../http/errors.ts';
import { loadDefinition } from '../library/definitions.ts';
import type { LoggedEvent } from './injection-authority.ts';
import { carOf, rowToLogEvent } from '../attempts/rerun-inputs.ts';
import { cursorTimeMs, rewindCursor, startCursor, stepCursor, type RerunCursor } from '../attempts/rerun-cursor.ts';
import { injectionsByAttempt, injectionViews, resolveRows, type InjectionRow } from './injections.ts';

/** A re-run longer than this many steps is not made for the board (it would hold the process). */
const MAX_BOARD_STEPS = 400_000;

/**
 * The board's re-runs share the event loop with every bench's requests, so
 * they go in slices: after this many ms of work, other requests run before
 * the next slice (a bench back after minutes offline, or a new watcher of a
 * long attempt, would otherwise hold every request up for tens of ms).
 */
const BOARD_SLICE_MS = 4;
/** Steps carried between looks at the clock: about half a millisecond. */
const BOARD_CHUNK_STEPS = 500;

/** A clock for slicing work: `pace` lets other work run once the slice is used up. */
function slicer(stats: { yields: number }): { pace(): Promise<void> } {
  let since = performance.now();
  return {
    async pace() {
      if (performance.now() - since < BOARD_SLICE_MS) return;
      stats.yields++;
      await new Promise<void>((resolve) => setImmediate(resolve));
      since = performance.now();
    },
  };
}

const boardColumns = {
  attemptId: attempts.id,
  studentId: attempts.userId,
  studentName: users.name,
  scenarioTitle: scenarioVersions.title,
  assignmentId: attempts.assignmentId,
  assignmentTitle: assignments.title,
  mode: attempts.mode,
  status: attempts.status,
  startedAt: attempts.startedAt,
  simTimeMs: attempts.simTimeMs,
  benchTimeMs: attempts.benchTimeMs,
  benchSeenAt: attempts.benchSeenAt,
  lastSeq: attempts.lastSeq,
  seed: attempts.seed,
  scenarioVersionId: attempts.scenarioVersionId,
  /** When the latest event arrived: one step back along the (attempt, seq) index, not a scan of the log. */
  lastActivityAt: sql<Date | null>`(select ${attemptEvents.createdAt} from ${attemptEvents} where ${attemptEvents.attemptId} = ${attempts.id} order by ${attemptEvents.seq} desc limit 1)`.mapWith(
    attemptEvents.createdAt,
  ),
};

/** Attempts of the class: those of its assignments (server/accounts/access.ts: an instructor's reach ends there). */
function inClass(classId: number) {
  return eq(assignments.classId, classId);
}

export async function className(db: DbOrTx, classId: number): Promise<string> {
  const [row] = await db.select({ name: classes.name }).from(classes).where(eq(classes.id, classId));
  if (!row) throw notFound('No such class');
  return row.name;
}

type BoardRow = Awaited<ReturnType<typeof boardRows>>[number];

async function boardRows(db: DbOrTx, classId: number, where: ReturnType<typeof and>) {
  return db
    .select(boardColumns)
    .from(attempts)
    .innerJoin(users, eq(users.id, attempts.userId))
    .innerJoin(scenarioVersions, eq(scenarioVersions.id, attempts.scenarioVersionId))
    .leftJoin(assignments, eq(assignments.id, attempts.assignmentId))
    .where(and(inClass(classId), where))
    .orderBy(users.name, attempts.id);
}

/**
 * What a board entry shows that can change: its log, its sim time and its
 * injections (made and applied). Equal versions mean the entry sent is still
 * the one the database would give.
 */
export function boardVersionOf(a: Pick<BoardAttempt, 'lastSeq' | 'simTimeMs' | 'injections'>): string {
  // The board's sim time is already the later of the log's and the bench's clock (boardTimeMs).
  return versionOf(a.lastSeq, a.simTimeMs, a.injections.length, a.injections.filter((i) => i.appliedAt !== null).length);
}

/** The one spelling of a version, for an entry sent and for a row checked. */
const versionOf = (lastSeq: number, simTimeMs: number, injections: number, applied: number) => `${lastSeq}:${simTimeMs}:${injections}:${applied}`;

/**
 * The version (boardVersionOf) of each running attempt of the class, in one
 * light query: how an open board finds what its notifications may have
 * missed without rebuilding every entry.
 */
export async function boardVersions(db: DbOrTx, classId: number): Promise<Map<number, string>> {
  const rows = await db
    .select({
      attemptId: attempts.id,
      lastSeq: attempts.lastSeq,
      simTimeMs: sql<number>`greatest(${attempts.simTimeMs}, coalesce(${attempts.benchTimeMs}, 0))`,
      injections: sql<number>`(select count(*)::int from ${pendingInjections} p where p.attempt_id = ${attempts.id})`,
      applied: sql<number>`(select count(*)::int from ${pendingInjections} p where p.attempt_id = ${attempts.id} and p.applied_at is not null)`,
    })
    .from(attempts)
    .leftJoin(assignments, eq(assignments.id, attempts.assignmentId))
    .where(and(inClass(classId), eq(attempts.status, 'running')));
  return new Map(rows.map((r) => [r.attemptId, versionOf(r.lastSeq, r.simTimeMs, r.injections, r.applied)]));
}

/** The running attempts of the class, oldest student name first. */
export async function classBoard(db: DbOrTx, classId: number, runs: BoardRuns): Promise<BoardAttempt[]> {
  return toBoardAttempts(db, await boardRows(db, classId, eq(attempts.status, 'running')), runs);
}

/**
 * Those of the given attempts that are the class's, as the board shows them
 * (running or not), in board order; ids not of the class are left out.
 */
export async function boardAttempts(db: DbOrTx, classId: number, attemptIds: readonly number[], runs: BoardRuns): Promise<BoardAttempt[]> {
  if (attemptIds.length === 0) return [];
  return toBoardAttempts(db, await boardRows(db, classId, inArray(attempts.id, [...attemptIds])), runs);
}

async function toBoardAttempts(db: DbOrTx, rows: readonly BoardRow[], runs: BoardRuns): Promise<BoardAttempt[]> {
  if (rows.length === 0) return [];
  const ids = rows.map((r) => r.attemptId);
  const [views, injections] = await Promise.all([runs.views(db, rows.filter((r) => r.status === 'running')), injectionsByAttempt(db, ids)]);
  return rows.map((r) => toBoardAttempt(r, views.get(r.attemptId) ?? null, injections.get(r.attemptId) ?? []));
}

function toBoardAttempt(r: BoardRow, live: LiveView | null, injections: readonly InjectionRow[]): BoardAttempt {
  // The bench's logs of the injections, stored when each was marked applied.
  const logged: LoggedEvent[] = (live?.changes ?? []).flatMap((c) => {
    const id = c.event.kind === 'change-apply' ? c.event.change.id : c.event.kind === 'change-clear' ? c.event.changeId : null;
    const row = injections.find((i) => i.action.faultId === id && (i.action.type === 'inject') === (c.event.kind === 'change-apply'));
    return row?.appliedAt ? [{ seq: c.seq, storedAt: row.appliedAt, event: c.event }] : [];
  });
  const views = injectionViews(injections, r.status === 'running' ? resolveRows(injections, logged) : undefined);
  return {
    attemptId: r.attemptId,
    studentId: r.studentId,
    studentName: r.studentName,
    scenarioTitle: r.scenarioTitle,
    assignmentId: r.assignmentId,
    assignmentTitle: r.assignmentTitle,
    mode: r.mode,
    status: r.status === 'submitted' ? 'submitted' : 'running',
    startedAt: r.startedAt.toISOString(),
    simTimeMs: boardTimeMs(r),
    lastSeq: r.lastSeq,
    currentTest: live?.currentTest ?? null,
    readings: live?.readings ?? null,
    recorded: live?.recorded ?? [],
    injections: views,
    flagged: views.some((v) => v.status === 'flagged'),
    lastActivityAt: r.lastActivityAt ? r.lastActivityAt.toISOString() : null,
    benchSeenAt: r.benchSeenAt ? r.benchSeenAt.toISOString() : null,
  };
}

/** The moment the board shows: the bench's clock as last reported, or the latest stored event if that is later. */
export const boardTimeMs = (r: { simTimeMs: number; benchTimeMs: number | null }): number => Math.max(r.simTimeMs, r.benchTimeMs ?? 0);

export function liveReadings(r: Readings, linkBlown: boolean): LiveReadings {
  return {
    voltmeterV: r.voltmeterV,
    rippleVac: r.rippleVac,
    clampA: r.clampA,
    tachRpm: r.tachRpm,
    ammeterA: r.ammeterA,
    pileA: r.pileA,
    engine: r.engine,
    batterySoc01: r.batterySoc01,
    pileHot: r.pileHot,
    pileOverheated: r.pileOverheated,
    linkBlown,
  };
}

const POS: readonly string[] = ['battery-pos', 'jump-pos'];
const NEG: readonly string[] = ['battery-neg', 'jump-neg'];
const GROUNDS: readonly string[] = ['alt-case', 'engine-ground', 'chassis'];

/**
 * The test a bench set-up is for, from where the leads, clamp and ammeter are,
 * the key, the engine and the pile. Null when the set-up is none of them.
 */
export function testOfSetup(c: Controls, r: Pick<Readings, 'engine'>): DiagnosticTest | null {
  const running = r.engine === 'running';
  const loaded = c.pileDial01 > 0.02;
  const { red, black } = c.leads;
  const pair = (a: readonly string[], b: readonly string[]) => (red !== null && black !== null && a.includes(red) && b.includes(black)) || (red !== null && black !== null && b.includes(red) && a.includes(black));
  if (c.key === 'start' || r.engine === 'cranking') return 'cranking';
  if (c.ammeterInSeries || (!c.bplusConnected && !running)) return 'key-off-draw';
  if (pair(POS, ['alt-bplus'])) return 'voltage-drop-positive';
  if (pair(NEG, GROUNDS)) return 'voltage-drop-ground';
  if (red === 'alt-bplus' && black !== null && GROUNDS.includes(black) && running && !loaded) return 'ripple';
  const acrossBattery = red !== null && black !== null && POS.includes(red) && (NEG.includes(black) || GROUNDS.includes(black));
  if (running && loaded && (acrossBattery || c.clamp.conductor !== null)) return 'output';
  if (acrossBattery && running) return 'regulated-voltage';
  if (acrossBattery && loaded) return 'battery-load';
  if (acrossBattery) return 'battery-ocv';
  return null;
}

/** An event as the re-run holds it, with its seq in the log. */
interface RunItem {
  seq: number;
  event: InputEvent;
}

/** The model's order: by sim time, equal times in log order (what `orderEvents` gives the log by seq). */
const byTimeThenSeq = (a: RunItem, b: RunItem) => a.event.atMs - b.event.atMs || a.seq - b.seq;

interface RunCacheEntry {
  scenarioVersionId: number;
  /** The readings' events and the changes' events held, by seq (the model ignores the first; the injections' statuses read the second). */
  notes: { seq: number; event: LogEvent }[];
  /** Every stored event with a seq up to this one is held (later ones past a gap may be held too). */
  through: number;
  seqs: Set<number>;
  /** The held events in the model's order, and the same events alone for the model (the re-run's). */
  items: RunItem[];
  events: InputEvent[];
  lastAtMs: number;
  /** The re-run, carried on to the attempt's sim time at each refresh. */
  run: RerunCursor;
}

export interface LiveView {
  currentTest: DiagnosticTest | null;
  readings: LiveReadings;
  recorded: BoardAttempt['recorded'];
  /** The bench's logged changes, by seq. */
  changes: { seq: number; event: LogEvent }[];
}

/** What the re-run cache needs of an attempt's row. */
export interface BoardRunRow {
  attemptId: number;
  seed: number;
  scenarioVersionId: number;
  lastSeq: number;
  simTimeMs: number;
  benchTimeMs: number | null;
}

/** Counts since the cache was made, for the benches and tests. */
export interface BoardRunStats {
  /** Re-runs from the start: a newly watched attempt, or an event before the kept moment. */
  fullRuns: number;
  /** Re-runs carried forward from the kept moment. */
  carried: number;
  /** Stored events read (each read once, except those past a gap until it fills). */
  eventsLoaded: number;
  /** Times a refresh let other work run between slices of its re-runs. */
  yields: number;
}

/** The per-process cache of the board's re-runs (one entry per running attempt watched). */
export interface BoardRuns {
  /** The live view of each attempt (null when the model cannot be run for it), loading only events not yet held. */
  views(db: DbOrTx, rows: readonly BoardRunRow[]): Promise<Map<number, LiveView | null>>;
  forget(attemptId: number): void;
  readonly stats: BoardRunStats;
}

interface LoadedEvent {
  attemptId: number;
  seq: number;
  kind: string;
  simTimeMs: number;
  payload: unknown;
}

/**
 * The stored events after the given seq of each attempt, in one query, by
 * attempt then seq. Each attempt is its own range on the (attempt, seq) index
 * (the ordered lateral keeps the planner from scanning the whole log).
 */
async function eventsAfter(db: DbOrTx, after: ReadonlyMap<number, number>): Promise<LoadedEvent[]> {
  const due = sql.join(
    [...after].map(([attemptId, seq]) => sql`(${attemptId}::int, ${seq}::int)`),
    sql`, `,
  );
  const result = await db.execute<{ attemptId: number; seq: number; kind: string; simTimeMs: number; payload: unknown }>(sql`
    select e.attempt_id as "attemptId", e.seq, e.kind, e.sim_time_ms as "simTimeMs", e.payload
    from (values ${due}) as due (attempt_id, after_seq)
    cross join lateral (
      select x.attempt_id, x.seq, x.kind, x.sim_time_ms, x.payload from ${attemptEvents} x
      where x.attempt_id = due.attempt_id and x.seq > due.after_seq
      order by x.seq
    ) e
    order by e.attempt_id, e.seq`);
  return result.rows;
}

async function newEntry(db: DbOrTx, row: BoardRunRow): Promise<RunCacheEntry> {
  const car = carOf(await loadDefinition(db, row.scenarioVersionId));
  const events: InputEvent[] = [];
  return {
    scenarioVersionId: row.scenarioVersionId,
    notes: [],
    through: 0,
    seqs: new Set(),
    items: [],
    events,
    lastAtMs: 0,
    run: startCursor(car.params, row.seed, events, car.changes),
  };
}

/**
 * Takes in newly loaded events. They go after the applied ones when none of
 * them is due before the kept moment's last step (the model would then apply
 * them exactly as a run from the start does); otherwise the kept moment is
 * dropped and the next run starts over. Returns whether the moment was kept.
 */
function takeIn(entry: RunCacheEntry, fresh: RunItem[]): boolean {
  if (fresh.length === 0) return true;
  const lastStepAt = cursorTimeMs(entry.run) - DT_MS;
  const keep = fresh.every((i) => i.event.atMs > lastStepAt);
  fresh.sort(byTimeThenSeq);
  const last = entry.items[entry.items.length - 1];
  if (keep && (!last || byTimeThenSeq(last, fresh[0]!) < 0)) {
    for (const i of fresh) {
      entry.items.push(i);
      entry.events.push(i.event);
    }
  } else {
    // Re-sort only what is not applied yet (all of it when the moment is dropped).
    const from = keep ? entry.run.point.nextEventIndex : 0;
    const tail = entry.items.splice(from).concat(fresh).sort(byTimeThenSeq);
    entry.items.push(...tail);
    entry.events = entry.items.map((i) => i.event);
    entry.run.events = entry.events;
  }
  for (const i of fresh) entry.lastAtMs = Math.max(entry.lastAtMs, i.event.atMs);
  return keep;
}

export function createBoardRuns(log: (message: string, err: unknown) => void): BoardRuns {
  const cache = new Map<number, RunCacheEntry>();
  const stats: BoardRunStats = { fullRuns: 0, carried: 0, eventsLoaded: 0, yields: 0 };
  // One refresh at a time per process, so two streams never take in the same events twice.
  let queue: Promise<unknown> = Promise.resolve();

  async function refresh(db: DbOrTx, rows: readonly BoardRunRow[]): Promise<Map<number, LiveView | null>> {
    const views = new Map<number, LiveView | null>();
    if (rows.length === 0) return views;
    const after = new Map<number, number>();
    for (const row of rows) {
      const held = cache.get(row.attemptId);
      // Another scenario or seed, or a log that went back: start this attempt over.
      if (held && (held.run.seed !== row.seed || held.scenarioVersionId !== row.scenarioVersionId || row.lastSeq < held.through)) cache.delete(row.attemptId);
      after.set(row.attemptId, cache.get(row.attemptId)?.through ?? 0);
    }
    let loaded: LoadedEvent[];
    try {
      loaded = await eventsAfter(db, after);
    } catch (err) {
      log('board re-run failed', err);
      for (const row of rows) views.set(row.attemptId, null);
      return views;
    }
    stats.eventsLoaded += loaded.length;
    const byAttempt = new Map<number, typeof loaded>();
    for (const r of loaded) {
      const list = byAttempt.get(r.attemptId);
      if (list) list.push(r);
      else byAttempt.set(r.attemptId, [r]);
    }
    const slices = slicer(stats);
    for (const row of rows) {
      try {
        let entry = cache.get(row.attemptId);
        if (!entry) {
          entry = await newEntry(db, row);
          cache.set(row.attemptId, entry);
        }
        const fresh: RunItem[] = [];
        for (const r of byAttempt.get(row.attemptId) ?? []) {
          if (entry.seqs.has(r.seq)) continue;
          entry.seqs.add(r.seq);
          const event = rowToLogEvent(r);
          if (!event) continue;
          if (isNoteEvent(event)) entry.notes.push({ seq: r.seq, event });
          else {
            if (event.kind === 'change-apply' || event.kind === 'change-clear') entry.notes.push({ seq: r.seq, event });
            fresh.push({ seq: r.seq, event });
          }
        }
        entry.notes.sort((a, b) => a.seq - b.seq);
        if (!takeIn(entry, fresh)) rewindCursor(entry.run);
        entry.through = Math.max(entry.through, row.lastSeq);
        views.set(row.attemptId, await carryTo(entry, boardTimeMs(row), slices));
      } catch (err) {
        log('board re-run failed', err);
        views.set(row.attemptId, null);
      }
      await slices.pace();
    }
    return views;
  }

  /**
   * The view at the attempt's sim time: carried forward from the kept moment,
   * or run from the start, in chunks with other requests let in between
   * slices (refreshes run one at a time, so nothing else touches the entry
   * meanwhile). Stepping in chunks gives the states of stepping in one go.
   */
  async function carryTo(entry: RunCacheEntry, simTimeMs: number, slices: { pace(): Promise<void> }): Promise<LiveView | null> {
    const targetMs = Math.ceil(Math.max(simTimeMs, entry.lastAtMs) / DT_MS) * DT_MS;
    if (targetMs / DT_MS > MAX_BOARD_STEPS) return null;
    const run = entry.run;
    if (cursorTimeMs(run) === 0 || cursorTimeMs(run) > targetMs) {
      rewindCursor(run);
      stats.fullRuns++;
    } else stats.carried++;
    run.events = orderEvents(entry.events);
    for (let steps = Math.round((targetMs - cursorTimeMs(run)) / DT_MS); steps > 0; ) {
      const n = Math.min(steps, BOARD_CHUNK_STEPS);
      stepCursor(run, n);
      steps -= n;
      if (steps > 0) await slices.pace();
    }
    const readings = readMeters(run.params, run.point.state);
    const recorded = readingsOfLog(entry.notes.map((n) => n.event)).map((r) => ({ id: r.id, test: r.test, value: r.value, unit: r.unit, atMs: r.atMs }));
    const changes = entry.notes.filter((n) => n.event.kind === 'change-apply' || n.event.kind === 'change-clear');
    return { currentTest: testOfSetup(run.point.controls, readings), readings: liveReadings(readings, run.point.state.fusibleLinkBlown), recorded, changes };
  }

  return {
    views(db, rows) {
      const run = queue.then(() => refresh(db, rows));
      queue = run.catch(() => undefined);
      return run;
    },
    forget(attemptId) {
      cache.delete(attemptId);
    },
    stats,
  };
}
