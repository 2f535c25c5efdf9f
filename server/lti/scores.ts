/**
 * Grades back to the platform (Assignment and Grade Services 2.0). A graded
 * attempt whose assignment a platform launched, by a student that platform
 * launched, gets a row in a durable outbox in PostgreSQL, written with the
 * score as the Score service takes it. A worker in each server process takes
 * due rows (SKIP LOCKED and a lease, so two processes never send one at
 * once), posts them with a client-credentials token and, when the platform
 * is away or failing, tries again with back-off (base × 2^(tries−1), at most
 * an hour); after MAX_TRIES, or when the platform refuses the score outright,
 * the row is `failed` and an instructor can resend it. Nothing is lost to a
 * platform that is down, nor to a restart: rows wait in the database.
 *
 * 1EdTech Assignment and Grade Services 2.0 §3.4 (score publish service:
 * POST to the line item's /scores with application/vnd.ims.lis.v1.score+json;
 * userId, scoreGiven, scoreMaximum, activityProgress, gradingProgress,
 * timestamp, comment).
 */
import { and, desc, eq, inArray, sql } from 'drizzle-orm';
import type { AttemptResult } from '../../shared/api/attempts.ts';
import type { GradeSync, GradeSyncRow } from '../../shared/api/lti.ts';
import { diagnosisLabel } from '../../shared/scenario.ts';
import type { AppContext } from '../context.ts';
import type { Db, DbOrTx } from '../db/client.ts';
import { attempts, users } from '../db/schema.ts';
import { MEDIA, SCOPE } from './claims.ts';
import { platformById, type PlatformRow } from './platforms.ts';
import { callService, forgetServiceTokens, ServiceError, serviceToken } from './service-token.ts';
import { ltiPlatforms, ltiResourceLinks, ltiScoreOutbox } from './tables.ts';

export const MAX_TRIES = 12;
export const MAX_BACKOFF_MS = 60 * 60 * 1000;
const LEASE_MS = 2 * 60 * 1000;
const BATCH = 10;

export interface ScorePayload {
  userId: string;
  scoreGiven: number;
  scoreMaximum: number;
  activityProgress: 'Completed';
  gradingProgress: 'FullyGraded';
  timestamp: string;
  comment: string;
}

/** The comment the gradebook shows beside the score: the fault the student named, and whether it was the one. */
export function scoreComment(result: Pick<AttemptResult, 'fault' | 'verified'> | null): string {
  if (!result) return 'Graded in Loadline.';
  const named = diagnosisLabel(result.fault.given);
  const verdict = result.fault.ok ? 'correct' : `not the fault; it was: ${result.fault.labels.join('; ') || 'another fault'}`;
  return `Fault named: ${named} (${verdict}).${result.verified ? '' : ' Some recorded readings did not match the bench.'}`.slice(0, 1000);
}

/** The workers of this process, woken when this process queues a score. */
const wakers = new WeakMap<Db, Set<() => void>>();

/**
 * Queues the score of a graded attempt for every platform that launched its
 * assignment for its student; nothing when the attempt is not linked to a
 * launch. Called where a submission's result is stored (attempts/submit.ts).
 */
export async function queueScoresForAttempt(db: Db, attemptId: number): Promise<number> {
  const queued = await insertScores(db, sql`a.id = ${attemptId}`);
  if (queued > 0) for (const wake of wakers.get(db) ?? []) wake();
  return queued;
}

/**
 * Rows for graded, linked attempts matching `where` (on attempts `a`) that
 * have none yet: one per line item. Returns how many were added.
 */
async function insertScores(db: DbOrTx, where: ReturnType<typeof sql>): Promise<number> {
  const { rows } = await db.execute<{ id: number }>(sql`
    insert into lti_score_outbox (attempt_id, platform_id, lineitem_url, payload)
    select a.id, l.platform_id, l.lineitem_url,
           jsonb_build_object(
             'userId', acc.subject,
             'scoreGiven', round(a.grade::numeric, 2),
             'scoreMaximum', 100,
             'activityProgress', 'Completed',
             'gradingProgress', 'FullyGraded',
             'timestamp', to_char(a.submitted_at at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"'),
             'result', a.result)
      from attempts a
      join lti_resource_links l on l.assignment_id = a.assignment_id and l.lineitem_url is not null
      join lti_accounts acc on acc.user_id = a.user_id and acc.platform_id = l.platform_id
     where ${where} and a.status = 'submitted' and a.grade is not null
    on conflict (attempt_id, lineitem_url) do nothing
    returning id`);
  if (rows.length === 0) return 0;
  // The comment is written from the stored result here rather than in SQL.
  const ids = rows.map((r) => r.id);
  const made = await db.select({ id: ltiScoreOutbox.id, payload: ltiScoreOutbox.payload }).from(ltiScoreOutbox).where(inArray(ltiScoreOutbox.id, ids));
  for (const row of made) {
    const { result, ...rest } = row.payload as Omit<ScorePayload, 'comment'> & { result: AttemptResult | null };
    const payload: ScorePayload = { ...rest, scoreGiven: Number(rest.scoreGiven), comment: scoreComment(result) };
    await db.update(ltiScoreOutbox).set({ payload }).where(eq(ltiScoreOutbox.id, row.id));
  }
  return rows.length;
}

/**
 * A resource link placed on the platform by hand (not by deep linking) may
 * come with no line item, only the line items address: once a student of it
 * has a graded attempt, Loadline finds the link's line item there (by
 * resource link id) or makes one, and keeps its address; the sweep then
 * queues the scores. AGS 2.0 §3.2 (line item service: GET with
 * resource_link_id, POST application/vnd.ims.lis.v2.lineitem+json).
 */
export async function resolveLineItems(ctx: Pick<AppContext, 'db' | 'log'>): Promise<number> {
  const { rows } = await ctx.db.execute<{ platform_id: number; resource_link_id: string; lineitems_url: string; assignment_id: number; title: string }>(sql`
    select l.platform_id, l.resource_link_id, l.lineitems_url, l.assignment_id, asg.title
      from lti_resource_links l
      join assignments asg on asg.id = l.assignment_id
     where l.lineitem_url is null and l.lineitems_url is not null and l.ags_scopes ? ${SCOPE.lineItem}
       and exists (select 1 from attempts a join lti_accounts acc on acc.user_id = a.user_id and acc.platform_id = l.platform_id
                    where a.assignment_id = l.assignment_id and a.status = 'submitted' and a.grade is not null)
     limit 20`);
  let resolved = 0;
  for (const r of rows) {
    try {
      const platform = await platformById(ctx.db, r.platform_id);
      if (!platform) continue;
      const token = await serviceToken(ctx.db, platform, [SCOPE.lineItem]);
      const list = new URL(r.lineitems_url);
      list.searchParams.set('resource_link_id', r.resource_link_id);
      const found = (await (await callService(list.toString(), { headers: { Authorization: `Bearer ${token}`, Accept: 'application/vnd.ims.lis.v2.lineitemcontainer+json' } }, 'Line items')).json()) as { id?: string }[];
      let url = Array.isArray(found) ? found.find((li) => typeof li.id === 'string')?.id : undefined;
      if (!url) {
        const made = await callService(
          r.lineitems_url,
          {
            method: 'POST',
            headers: { Authorization: `Bearer ${token}`, 'Content-Type': MEDIA.lineItem, Accept: MEDIA.lineItem },
            body: JSON.stringify({ label: r.title, scoreMaximum: 100, resourceLinkId: r.resource_link_id, resourceId: `loadline-assignment-${r.assignment_id}`, tag: 'loadline-grade' }),
          },
          'Line item',
        );
        url = ((await made.json()) as { id?: string }).id;
      }
      if (!url) throw new ServiceError('Line item: the platform gave no line item address', null, false);
      await ctx.db.update(ltiResourceLinks).set({ lineitemUrl: url, updatedAt: new Date() }).where(and(eq(ltiResourceLinks.platformId, r.platform_id), eq(ltiResourceLinks.resourceLinkId, r.resource_link_id)));
      resolved++;
    } catch (err) {
      ctx.log('warn', `lti line item of link ${r.resource_link_id} not found or made: ${err instanceof Error ? err.message : String(err)}`, { platformId: r.platform_id });
    }
  }
  if (resolved) await queueMissedScores(ctx.db);
  return resolved;
}

/** Attempts graded in the last week whose score was never queued (a process that stopped between storing and queuing). */
export async function queueMissedScores(db: Db): Promise<number> {
  return insertScores(
    db,
    sql`a.submitted_at > now() - interval '7 days' and not exists (select 1 from lti_score_outbox o where o.attempt_id = a.id and o.lineitem_url = l.lineitem_url)`,
  );
}

/** The score service's address: the line item's address with /scores added to its path (its query kept). */
export function scoresUrl(lineitemUrl: string): string {
  const u = new URL(lineitemUrl);
  u.pathname = `${u.pathname.replace(/\/+$/, '')}/scores`;
  return u.toString();
}

async function postScore(db: Db, platform: PlatformRow, lineitemUrl: string, payload: ScorePayload): Promise<void> {
  const send = async (fresh: boolean) => {
    const token = await serviceToken(db, platform, [SCOPE.score], { fresh });
    return callService(
      scoresUrl(lineitemUrl),
      { method: 'POST', headers: { Authorization: `Bearer ${token}`, 'Content-Type': MEDIA.score, Accept: 'application/json' }, body: JSON.stringify(payload) },
      'Score',
    );
  };
  try {
    await send(false);
  } catch (err) {
    // A kept token the platform no longer takes: once more with a new one.
    if (!(err instanceof ServiceError) || err.status !== 401) throw err;
    forgetServiceTokens(db, platform.id);
    await send(true);
  }
}

export function backoffMs(tries: number, baseMs: number): number {
  return Math.min(baseMs * 2 ** Math.max(0, tries - 1), MAX_BACKOFF_MS);
}

interface Claimed {
  id: number;
  platformId: number;
  lineitemUrl: string;
  payload: ScorePayload;
  tries: number;
}

/** Takes the due rows for this worker (a lease of LEASE_MS), none that another process holds. */
async function claimDue(db: Db): Promise<Claimed[]> {
  const { rows } = await db.execute<{ id: number; platform_id: number; lineitem_url: string; payload: ScorePayload; tries: number }>(sql`
    update lti_score_outbox set locked_until = now() + ${`${LEASE_MS} milliseconds`}::interval
     where id in (
       select id from lti_score_outbox
        where status = 'pending' and next_try_at <= now() and (locked_until is null or locked_until < now())
        order by next_try_at
        limit ${BATCH}
        for update skip locked)
    returning id, platform_id, lineitem_url, payload, tries`);
  return rows.map((r) => ({ id: r.id, platformId: r.platform_id, lineitemUrl: r.lineitem_url, payload: r.payload, tries: r.tries }));
}

/** Sends what is due once; returns how many were sent. The worker calls this; so can tests. */
export async function sendDueScores(ctx: Pick<AppContext, 'db' | 'log'>, opts: { baseMs: number }): Promise<number> {
  const due = await claimDue(ctx.db);
  let sent = 0;
  for (const row of due) {
    const tries = row.tries + 1;
    try {
      const platform = await platformById(ctx.db, row.platformId);
      if (!platform) throw new ServiceError('The platform is no longer registered', null, false);
      await postScore(ctx.db, platform, row.lineitemUrl, row.payload);
      await ctx.db
        .update(ltiScoreOutbox)
        .set({ status: 'sent', tries, sentAt: new Date(), lockedUntil: null, lastError: null })
        .where(eq(ltiScoreOutbox.id, row.id));
      sent++;
    } catch (err) {
      const message = err instanceof Error ? err.message : String(err);
      const retry = err instanceof ServiceError ? err.retryable : true;
      const giveUp = !retry || tries >= MAX_TRIES;
      await ctx.db
        .update(ltiScoreOutbox)
        .set({
          status: giveUp ? 'failed' : 'pending',
          tries,
          lastError: message.slice(0, 1000),
          lockedUntil: null,
          nextTryAt: new Date(Date.now() + backoffMs(tries, opts.baseMs)),
        })
        .where(eq(ltiScoreOutbox.id, row.id));
      ctx.log('warn', `lti score ${giveUp ? 'failed' : 'will be retried'}: ${message}`, { outboxId: row.id, tries });
    }
  }
  return sent;
}

export interface ScoreWorker {
  /** Look for due rows now. */
  wake(): void;
  stop(): Promise<void>;
}

/** The outbox worker of one process: looks every pollMs, and at once when this process queues a score. */
export function startScoreWorker(ctx: Pick<AppContext, 'db' | 'log'>, opts: { pollMs: number; baseMs: number }): ScoreWorker {
  let timer: NodeJS.Timeout | null = null;
  let running: Promise<void> | null = null;
  let again = false;
  let stopped = false;
  let rounds = 0;

  const round = async () => {
    try {
      // Now and then (and first), pick up scores a stopped process never queued, and line items to find or make.
      if (rounds++ % 12 === 0) {
        await queueMissedScores(ctx.db);
        await resolveLineItems(ctx);
      }
      while (!stopped && (await sendDueScores(ctx, opts)) > 0) {
        // More may be due: go on until a round sends nothing.
      }
    } catch (err) {
      ctx.log('warn', 'lti score worker round failed', err);
    }
  };
  const run = () => {
    if (stopped) return;
    if (running) {
      again = true;
      return;
    }
    if (timer) clearTimeout(timer);
    timer = null;
    running = round().finally(() => {
      running = null;
      if (stopped) return;
      if (again) {
        again = false;
        run();
      } else timer = setTimeout(run, opts.pollMs);
    });
  };
  let set = wakers.get(ctx.db);
  if (!set) {
    set = new Set();
    wakers.set(ctx.db, set);
  }
  set.add(run);
  run();
  return {
    wake: run,
    async stop() {
      stopped = true;
      wakers.get(ctx.db)?.delete(run);
      if (timer) clearTimeout(timer);
      await running;
    },
  };
}

/** An instructor's view of an assignment's grades as the platform has (or will have) them. */
export async function gradeSyncOf(db: DbOrTx, assignmentId: number): Promise<GradeSync> {
  const [link] = await db
    .select({ platformName: ltiPlatforms.name })
    .from(ltiResourceLinks)
    .innerJoin(ltiPlatforms, eq(ltiPlatforms.id, ltiResourceLinks.platformId))
    .where(eq(ltiResourceLinks.assignmentId, assignmentId))
    .limit(1);
  if (!link) return { linked: false, platformName: null, rows: [] };
  const rows = await db
    .select({
      id: ltiScoreOutbox.id,
      attemptId: ltiScoreOutbox.attemptId,
      studentId: attempts.userId,
      studentName: users.name,
      payload: ltiScoreOutbox.payload,
      status: ltiScoreOutbox.status,
      tries: ltiScoreOutbox.tries,
      lastError: ltiScoreOutbox.lastError,
      nextTryAt: ltiScoreOutbox.nextTryAt,
      sentAt: ltiScoreOutbox.sentAt,
    })
    .from(ltiScoreOutbox)
    .innerJoin(attempts, eq(attempts.id, ltiScoreOutbox.attemptId))
    .innerJoin(users, eq(users.id, attempts.userId))
    .where(eq(attempts.assignmentId, assignmentId))
    .orderBy(users.name, desc(ltiScoreOutbox.id));
  const out: GradeSyncRow[] = rows.map((r) => ({
    id: r.id,
    attemptId: r.attemptId,
    studentId: r.studentId,
    studentName: r.studentName,
    scoreGiven: typeof (r.payload as ScorePayload).scoreGiven === 'number' ? (r.payload as ScorePayload).scoreGiven : null,
    status: r.status === 'sent' || r.status === 'failed' ? r.status : 'pending',
    tries: r.tries,
    lastError: r.lastError,
    nextTryAt: r.status === 'pending' ? r.nextTryAt.toISOString() : null,
    sentAt: r.sentAt?.toISOString() ?? null,
  }));
  return { linked: true, platformName: link.platformName, rows: out };
}

export async function scoreOutboxRow(db: DbOrTx, id: number): Promise<{ attemptId: number } | null> {
  const [row] = await db.select({ attemptId: ltiScoreOutbox.attemptId }).from(ltiScoreOutbox).where(eq(ltiScoreOutbox.id, id));
  return row ?? null;
}

/** Sends a score again now (a failed one, or one sent that the gradebook lost). */
export async function resendScore(ctx: Pick<AppContext, 'db'>, id: number): Promise<{ id: number; status: string }> {
  const [row] = await ctx.db
    .update(ltiScoreOutbox)
    .set({ status: 'pending', nextTryAt: new Date(), lockedUntil: null, tries: 0 })
    .where(eq(ltiScoreOutbox.id, id))
    .returning({ id: ltiScoreOutbox.id, status: ltiScoreOutbox.status });
  for (const wake of wakers.get(ctx.db) ?? []) wake();
  return row!;
}

