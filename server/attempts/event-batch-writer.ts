/**
 * Event batches are stored together: every batch handed in during one turn of
 * the event loop goes to PostgreSQL in one statement, with one round trip,
 * one commit and one wake-up of the listeners. A class of benches sends a
 * batch a second each; under load, several arrive in the same turn, and one
 * statement for them costs PostgreSQL about half of what two cost, a quarter
 * of what four cost. Nothing waits for a group to fill: a lone batch is sent
 * at the end of the turn it arrived in, as it would have been on its own.
 *
 * Within a statement each batch keeps the meaning of the statement it would
 * have had alone (events.ts): its attempt's row is locked, its events
 * are stored only when the attempt is the student's and still running, each
 * once, and the attempt is moved on when its prediction holds. Rows are locked
 * in attempt order, so two statements in flight never wait on each other in a
 * circle. A group holds at most one batch per attempt (a second batch of the
 * same attempt goes in the next statement), and at most MAX_GROUP batches.
 *
 * Should a statement fail on a value PostgreSQL cannot store (a data
 * exception, SQLSTATE class 22, or a constraint, class 23), nothing of it was
 * written; each of its batches is then sent again on its own, so only the
 * batch at fault fails. Any other failure (the database away) fails every
 * batch of the group, as it would have failed each alone.
 */
import type pg from 'pg';
import type { DiagnosticTest } from '../../sim/faults.ts';
import type { LogEvent } from '../../shared/api/attempts.ts';

/** The most batches in one statement, so one statement stays short. */
export const MAX_GROUP = 64;

/** A batch to store, with where it moves the attempt on if the prediction holds. */
export interface BatchToStore {
  attemptId: number;
  /** The signed-in student: the batch is stored only on an attempt of theirs. */
  userId: number;
  events: readonly { seq: number; event: LogEvent }[];
  /** The lastSeq the batch follows on from and what it moves the attempt to, or null to store only. */
  predicted: { fromSeq: number; lastSeq: number; currentTest: DiagnosticTest | null; simTimeMs: number } | null;
}

/** A new event of a batch whose sim time runs back before an event stored before it in the log (or after a stored later one). */
export interface Backdated {
  seq: number;
  atMs: number;
  storedSeq: number;
  storedAtMs: number;
}

/** The attempt's row as the batch found it once locked, what the batch stored, and what it moved on. */
export interface StoredBatch {
  status: string;
  lastSeq: number;
  simTimeMs: number;
  /** The seqs this batch stored (those already stored are left out). */
  inserted: number[];
  /** The seqs after lastSeq stored before this batch, in order. */
  earlier: number[];
  /** Whether the prediction held and the attempt was moved on. */
  movedOn: boolean;
  /** Set when the batch was refused (nothing of it stored): its first event out of time order against the stored log. */
  backdated: Backdated | null;
}

/** Counts since the writer was made, for tests and the benchmarks. */
export interface BatchWriterStats {
  statements: number;
  batches: number;
  /** Groups sent again one batch at a time after a data or constraint error. */
  retriedAlone: number;
}

export interface BatchWriter {
  /** Stores the batch with the others of this turn; null when there is no such attempt of this student. */
  store(batch: BatchToStore): Promise<StoredBatch | null>;
  readonly stats: BatchWriterStats;
}

interface Member {
  batch: BatchToStore;
  resolve(row: StoredBatch | null): void;
  reject(err: unknown): void;
}

type Row = StoredBatch & { attemptId: number };

/**
 * One statement for many batches, one per attempt. The parameters are
 * columns per batch ($1-$7), then the events as one JSON array ($8) of
 * `{attempt_id, seq, payload}`, the payload being the event itself (its kind
 * and sim time are read from it): one JSON text is far cheaper to send than a
 * column of JSON texts, each escaped as an array element. `a` locks the
 * attempts in id order; `back` finds, per attempt, the first new event whose
 * sim time runs back before the stored event just before it in the log (or
 * past the stored event just after it, when it fills a gap), one step along
 * the (attempt, seq) index each way; `ins` stores the events of those still
 * running and not refused so, each seq once (the batch's own order is checked
 * before it comes here); `predicted` moves on each attempt whose batch was wholly new and
 * followed on from its lastSeq, with nothing stored after it before (a
 * statement does not see its own rows, so `earlier` and that check see only
 * what was there before it).
 */
const STORE_BATCHES = `with b as (
    select * from unnest($1::int[], $2::int[], $3::int[], $4::int[], $5::text[], $6::int[], $7::int[])
      as b(attempt_id, user_id, from_seq, last_seq, current_test, sim_time_ms, n)
  ), a as (
    select t.id, t.status, t.last_seq, t.sim_time_ms
      from attempts t join b on b.attempt_id = t.id and b.user_id = t.user_id
     order by t.id
       for update of t
  ), ev as (
    select e.attempt_id, e.seq, (e.payload->>'atMs')::int as at_ms, e.payload
      from jsonb_to_recordset($8::jsonb) as e(attempt_id int, seq int, payload jsonb)
  ), back as (
    select distinct on (ev.attempt_id) ev.attempt_id, ev.seq, ev.at_ms,
           case when p.sim_time_ms > ev.at_ms then p.seq else n.seq end as stored_seq,
           case when p.sim_time_ms > ev.at_ms then p.sim_time_ms else n.sim_time_ms end as stored_ms
      from ev join a on a.id = ev.attempt_id
      left join lateral (select x.seq, x.sim_time_ms from attempt_events x
                          where x.attempt_id = ev.attempt_id and x.seq < ev.seq order by x.seq desc limit 1) p on true
      left join lateral (select y.seq, y.sim_time_ms from attempt_events y
                          where y.attempt_id = ev.attempt_id and y.seq > ev.seq order by y.seq limit 1) n on true
     where (p.sim_time_ms > ev.at_ms or n.sim_time_ms < ev.at_ms)
       and not exists (select 1 from attempt_events z where z.attempt_id = ev.attempt_id and z.seq = ev.seq)
     order by ev.attempt_id, ev.seq
  ), ins as (
    insert into attempt_events (attempt_id, seq, sim_time_ms, kind, payload)
    select ev.attempt_id, ev.seq, ev.at_ms, ev.payload->>'kind', ev.payload
      from ev join a on a.id = ev.attempt_id and a.status = 'running'
     where not exists (select 1 from back where back.attempt_id = ev.attempt_id)
    on conflict (attempt_id, seq) do nothing
    returning attempt_id, seq
  ), stored as (
    select attempt_id, count(*)::int as n, array_agg(seq) as seqs from ins group by attempt_id
  ), predicted as (
    update attempts t
       set last_seq = b.last_seq, current_test = b.current_test, sim_time_ms = greatest(t.sim_time_ms, b.sim_time_ms)
      from a join b on b.attempt_id = a.id join stored s on s.attempt_id = a.id
     where t.id = a.id and b.from_seq is not null and a.status = 'running' and a.last_seq = b.from_seq and s.n = b.n
       and not exists (select 1 from attempt_events e where e.attempt_id = a.id and e.seq > b.from_seq)
    returning t.id
  )
  select a.id as "attemptId", a.status, a.last_seq as "lastSeq", a.sim_time_ms as "simTimeMs",
         coalesce((select s.seqs from stored s where s.attempt_id = a.id), '{}') as inserted,
         coalesce((select array_agg(e.seq order by e.seq) from attempt_events e where e.attempt_id = a.id and e.seq > a.last_seq), '{}') as earlier,
         exists (select 1 from predicted p where p.id = a.id) as "movedOn",
         (select json_build_object('seq', b.seq, 'atMs', b.at_ms, 'storedSeq', b.stored_seq, 'storedAtMs', b.stored_ms) from back b where b.attempt_id = a.id) as backdated
    from a`;

function parametersOf(batches: readonly BatchToStore[]): unknown[] {
  const attemptIds: number[] = [];
  const userIds: number[] = [];
  const fromSeqs: (number | null)[] = [];
  const lastSeqs: (number | null)[] = [];
  const tests: (DiagnosticTest | null)[] = [];
  const simTimes: (number | null)[] = [];
  const counts: number[] = [];
  const events: { attempt_id: number; seq: number; payload: LogEvent }[] = [];
  for (const b of batches) {
    attemptIds.push(b.attemptId);
    userIds.push(b.userId);
    fromSeqs.push(b.predicted?.fromSeq ?? null);
    lastSeqs.push(b.predicted?.lastSeq ?? null);
    tests.push(b.predicted?.currentTest ?? null);
    simTimes.push(b.predicted?.simTimeMs ?? null);
    counts.push(b.events.length);
    for (const { seq, event } of b.events) events.push({ attempt_id: b.attemptId, seq, payload: event });
  }
  return [attemptIds, userIds, fromSeqs, lastSeqs, tests, simTimes, counts, JSON.stringify(events)];
}

/** A data exception or a constraint violation: the statement wrote nothing, and some value in it is at fault. */
function isValueError(err: unknown): boolean {
  const code = (err as { code?: unknown } | null)?.code;
  return typeof code === 'string' && (code.startsWith('22') || code.startsWith('23'));
}

export function createBatchWriter(pool: pg.Pool): BatchWriter {
  const stats: BatchWriterStats = { statements: 0, batches: 0, retriedAlone: 0 };
  /** The groups of this turn, each at most one batch per attempt; a flush is due at the end of the turn whenever there are any. */
  let open: Map<number, Member>[] = [];

  async function send(members: readonly Member[]): Promise<void> {
    stats.statements++;
    stats.batches += members.length;
    let rows: Row[];
    try {
      ({ rows } = await pool.query<Row>({ name: 'events-store-batches', text: STORE_BATCHES, values: parametersOf(members.map((m) => m.batch)) }));
    } catch (err) {
      if (members.length > 1 && isValueError(err)) {
        stats.retriedAlone++;
        await Promise.all(members.map((m) => send([m])));
      } else for (const m of members) m.reject(err);
      return;
    }
    const byAttempt = new Map(rows.map((r) => [r.attemptId, r]));
    for (const m of members) {
      const row = byAttempt.get(m.batch.attemptId);
      m.resolve(
        row ? { status: row.status, lastSeq: row.lastSeq, simTimeMs: row.simTimeMs, inserted: row.inserted, earlier: row.earlier, movedOn: row.movedOn, backdated: row.backdated ?? null } : null,
      );
    }
  }

  function flush(): void {
    const groups = open;
    open = [];
    for (const group of groups) void send([...group.values()]);
  }

  return {
    stats,
    store(batch) {
      return new Promise<StoredBatch | null>((resolve, reject) => {
        if (open.length === 0) setImmediate(flush);
        let group = open.find((g) => g.size < MAX_GROUP && !g.has(batch.attemptId));
        if (!group) open.push((group = new Map()));
        group.set(batch.attemptId, { batch, resolve, reject });
      });
    },
  };
}

const writers = new WeakMap<pg.Pool, BatchWriter>();

/** The batch writer of this pool's database (one per pool, made on first use). */
export function batchWriterOf(pool: pg.Pool): BatchWriter {
  let writer = writers.get(pool);
  if (!writer) writers.set(pool, (writer = createBatchWriter(pool)));
  return writer;
}
