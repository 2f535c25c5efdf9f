/**
 * The class board: every running attempt of a class (its assignments, and
 * practice by its students) with the student, scenario, sim time, the test the
 * bench is set up for and the meters, as the server's own re-run of the
 * stored events shows them. The re-run is kept per attempt and carried
 * forward as events arrive, so an update costs only the new sim time.
 */
import { and, desc, eq, inArray, isNull, or, sql } from 'drizzle-orm';
import type { DiagnosticTest } from '../../sim/faults.ts';
import type { Controls } from '../../sim/inputs.ts';
import type { Readings } from '../../sim/instruments.ts';
import { readMeters } from '../../sim/instruments.ts';
import type { ReplayPoint } from '../../sim/replay.ts';
import { advance, stateAt } from '../../sim/replay.ts';
import { DT_MS } from '../../sim/step.ts';
import type { BoardAttempt, LiveReadings } from '../../shared/api/live.ts';
import type { DbOrTx } from '../db/client.ts';
import { assignments, attemptEvents, attempts, classes, enrollments, scenarioVersions, users } from '../db/schema.ts';
import { notFound } from '../http/errors.ts';
import { loadAttemptRun, type AttemptRunInputs } from './live-attempt-run.ts';
import { injectionViews, listInjections } from './live-injections.ts';

/** A re-run longer than this many steps is not made for the board (it would hold the process). */
const MAX_BOARD_STEPS = 400_000;

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
  lastSeq: attempts.lastSeq,
};

/** Attempts of the class: assigned through its assignments, or practice by its enrolled students. */
function inClass(classId: number) {
  return or(
    eq(assignments.classId, classId),
    and(isNull(attempts.assignmentId), inArray(attempts.userId, sql`(select ${enrollments.userId} from ${enrollments} where ${enrollments.classId} = ${classId})`)),
  );
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

/** The running attempts of the class, oldest student name first. */
export async function classBoard(db: DbOrTx, classId: number, runs: BoardRuns): Promise<BoardAttempt[]> {
  const rows = await boardRows(db, classId, eq(attempts.status, 'running'));
  return Promise.all(rows.map((r) => toBoardAttempt(db, r, runs)));
}

/** One attempt of the class as the board shows it, or null when it is not the class's. */
export async function boardAttempt(db: DbOrTx, classId: number, attemptId: number, runs: BoardRuns): Promise<BoardAttempt | null> {
  const [row] = await boardRows(db, classId, eq(attempts.id, attemptId));
  return row ? toBoardAttempt(db, row, runs) : null;
}

async function toBoardAttempt(db: DbOrTx, r: BoardRow, runs: BoardRuns): Promise<BoardAttempt> {
  const [last] = await db
    .select({ at: attemptEvents.createdAt })
    .from(attemptEvents)
    .where(eq(attemptEvents.attemptId, r.attemptId))
    .orderBy(desc(attemptEvents.seq))
    .limit(1);
  const live = r.status === 'running' ? await runs.at(db, r.attemptId, r.lastSeq, r.simTimeMs) : null;
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
    simTimeMs: r.simTimeMs,
    lastSeq: r.lastSeq,
    currentTest: live?.currentTest ?? null,
    readings: live?.readings ?? null,
    injections: injectionViews(await listInjections(db, r.attemptId)),
    lastActivityAt: last ? last.at.toISOString() : null,
  };
}

export function liveReadings(r: Readings): LiveReadings {
  return {
    voltmeterV: r.voltmeterV,
    rippleVac: r.rippleVac,
    clampA: r.clampA,
    tachRpm: r.tachRpm,
    ammeterA: r.ammeterA,
    pileA: r.pileA,
    engine: r.engine,
    batterySoc01: r.batterySoc01,
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

interface RunCacheEntry {
  inputs: AttemptRunInputs;
  lastSeq: number;
  point: ReplayPoint;
}

export interface LiveView {
  currentTest: DiagnosticTest | null;
  readings: LiveReadings;
}

/** The per-process cache of the board's re-runs (one entry per running attempt watched). */
export interface BoardRuns {
  at(db: DbOrTx, attemptId: number, lastSeq: number, simTimeMs: number): Promise<LiveView | null>;
  forget(attemptId: number): void;
}

export function createBoardRuns(log: (message: string, err: unknown) => void): BoardRuns {
  const cache = new Map<number, RunCacheEntry>();
  return {
    async at(db, attemptId, lastSeq, simTimeMs) {
      try {
        let entry = cache.get(attemptId);
        const inputs = entry && entry.lastSeq === lastSeq ? entry.inputs : await loadAttemptRun(db, attemptId);
        const lastAtMs = inputs.events.reduce((m, e) => Math.max(m, e.atMs), 0);
        const targetMs = Math.ceil(Math.max(simTimeMs, lastAtMs) / DT_MS) * DT_MS;
        if (targetMs / DT_MS > MAX_BOARD_STEPS) return null;
        const reusable =
          entry !== undefined &&
          entry.point.state.timeMs <= targetMs &&
          inputs.events.length >= entry.inputs.events.length &&
          inputs.events.slice(entry.point.nextEventIndex).every((e) => e.atMs >= entry!.point.state.timeMs);
        if (!entry || !reusable) {
          entry = { inputs, lastSeq, point: stateAt(inputs.params, inputs.seed, inputs.events, targetMs) };
        } else {
          const steps = Math.round((targetMs - entry.point.state.timeMs) / DT_MS);
          entry = { inputs, lastSeq, point: steps > 0 ? advance(inputs.params, entry.point, inputs.events, steps) : entry.point };
        }
        cache.set(attemptId, entry);
        const readings = readMeters(entry.inputs.params, entry.point.state);
        return { currentTest: testOfSetup(entry.point.controls, readings), readings: liveReadings(readings) };
      } catch (err) {
        log('board re-run failed', err);
        return null;
      }
    },
    forget(attemptId) {
      cache.delete(attemptId);
    },
  };
}
