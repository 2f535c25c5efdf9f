/**
 * `npm run bench:api`: 300 simulated students on loopback, each posting event
 * batches and reading their attempt, while an instructor's live board is
 * open, against a server process (or several: BENCH_PROCESSES) on a throwaway database. Prints
 * throughput, latency percentiles and errors beside the goals, and the time
 * the server takes to grade a 10-minute attempt under that load.
 *
 * Grading is measured two ways. As a bench submits: the attempt's log is
 * posted in batches during the round before (ten minutes of sim time in
 * one round: a student takes ten minutes), the last batch just before the
 * submission (the bench flushes its outbox, then submits), so the grading
 * worker has run the attempt ahead meanwhile. And from the start: a log
 * stored out of order before the load, so nothing was run ahead (as after a
 * restart mid-attempt) and the whole 10 minutes are re-run at submission.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createHmac, randomBytes } from 'node:crypto';
import http from 'node:http';
import { readdirSync, readFileSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { hashPassword } from '../server/accounts/passwords.ts';
import { DEMO_PASSWORD } from '../server/db/demo-people.ts';
import { withTestCluster } from './test-cluster.ts';
import { parseServerTiming } from '../server/http/server-timing.ts';

const root = fileURLToPath(new URL('..', import.meta.url));
const STUDENTS = Number(process.env.BENCH_STUDENTS ?? 300);
/** Server processes sharing the port (WEB_PROCESSES of server/serve.ts). */
const PROCESSES = Number(process.env.BENCH_PROCESSES ?? 1);
const DURATION_MS = Number(process.env.BENCH_SECONDS ?? 15) * 1000;
const BATCH_EVERY_MS = 1000;
const READ_EVERY_MS = 2000;
const ROUNDS = 2;
/** Gradings per round as a bench submits, spread over it, then one from the start. */
const PROBES_PER_ROUND = 3;
/** Batches a probe's 10-minute log is posted in during the round. */
const PROBE_BATCHES = 12;
/** A first round of the same load, not counted: new connections, the board's first snapshot and cold code paths settle in it. */
const WARM_UP_MS = Number(process.env.BENCH_WARM_UP_SECONDS ?? 5) * 1000;
const SECRET = 'bench-secret-bench-secret-bench-secret';

interface Sample {
  kind: 'post-events' | 'read-attempt';
  ms: number;
  /** The server's own time for it (its Server-Timing total), NaN when the answer had none. */
  serverMs: number;
  ok: boolean;
}

interface Figures {
  count: number;
  p50: number;
  p99: number;
  /** p99 of the server's own times (Server-Timing totals). */
  serverP99: number;
  max: number;
  errors: number;
}

/** One submission's grading: the round trip the bench saw, the server's own total (Server-Timing) and the time inside the grading worker. */
interface Graded {
  ms: number;
  serverMs: number;
  workerMs: number;
  /** Every part the server timed. */
  parts: Record<string, number>;
}

interface RoundResult {
  elapsedS: number;
  /** Share of one core each used over the round. */
  cpu: { server: number; postgres: number; load: number; machineBusy: number; waitedForCpu: number };
  all: Figures;
  post: Figures;
  read: Figures;
  grading: Graded[];
  gradingStatus: number[];
  /** Graded with nothing run ahead. */
  fromStart: Graded[];
  /** The mean size of a read-attempt answer (its whole log, sealed), in KB. */
  readKb: number;
}

/** CPU seconds used so far by a process and its children (`tree`), or by every process of a command name (`comm`); Linux /proc, 0 elsewhere. */
function cpuSeconds(match: { tree?: number; comm?: string }): number {
  const tick = 100; // USER_HZ on Linux
  let pids: string[] = [];
  try {
    pids = readdirSync('/proc').filter((d) => /^\d+$/.test(d));
  } catch {
    return 0;
  }
  const stats = new Map<number, { comm: string; ppid: number; cpu: number }>();
  for (const pid of pids) {
    try {
      const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
      const close = stat.lastIndexOf(')');
      const fields = stat.slice(close + 2).split(' ');
      stats.set(Number(pid), { comm: stat.slice(stat.indexOf('(') + 1, close), ppid: Number(fields[1]), cpu: (Number(fields[11]) + Number(fields[12])) / tick });
    } catch {
      // the process ended meanwhile
    }
  }
  let total = 0;
  for (const [pid, st] of stats) {
    if (match.comm !== undefined && st.comm === match.comm) total += st.cpu;
    if (match.tree !== undefined) {
      for (let p: number | undefined = pid, hops = 0; p !== undefined && p > 1 && hops < 8; p = stats.get(p)?.ppid, hops++) {
        if (p === match.tree) {
          total += st.cpu;
          break;
        }
      }
    }
  }
  return total;
}

/** The whole machine's busy and total CPU ticks so far (/proc/stat), to tell how near the cores were to full. */
function machineTicks(): { busy: number; total: number } {
  try {
    const cpu = readFileSync('/proc/stat', 'utf8').split('\n')[0]!.trim().split(/\s+/).slice(1).map(Number);
    const idle = (cpu[3] ?? 0) + (cpu[4] ?? 0);
    const total = cpu.slice(0, 8).reduce((a, b) => a + b, 0);
    return { busy: total - idle, total };
  } catch {
    return { busy: 0, total: 0 };
  }
}

/**
 * Microseconds that some runnable task has waited for a CPU so far (Linux pressure stall information;
 * NaN where the kernel does not report it). On a virtual machine this includes waiting for the host.
 */
function cpuWaitedUs(): number {
  try {
    const some = readFileSync('/proc/pressure/cpu', 'utf8').split('\n').find((l) => l.startsWith('some'));
    return Number(/total=(\d+)/.exec(some ?? '')?.[1] ?? Number.NaN);
  } catch {
    return Number.NaN;
  }
}

/** The share of the wall time `during` takes over which some task waited for a CPU. */
async function cpuWaitShare(during: () => Promise<unknown>): Promise<number> {
  const w0 = cpuWaitedUs();
  const t0 = performance.now();
  await during();
  return (cpuWaitedUs() - w0) / 1000 / (performance.now() - t0);
}

function percentile(sorted: number[], p: number): number {
  if (sorted.length === 0) return Number.NaN;
  const i = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1));
  return sorted[i]!;
}

/** The cookie express-session would have set for this session id. */
function signedCookie(sid: string): string {
  const sig = createHmac('sha256', SECRET).update(sid).digest('base64').replace(/=+$/, '');
  return `loadline.sid=${encodeURIComponent(`s:${sid}.${sig}`)}`;
}

async function startServerProcess(databaseUrl: string): Promise<{ url: string; child: ChildProcess }> {
  // Node itself with tsx's loader, so the pid held is the server's; BENCH_PROFILE_DIR writes a CPU profile there, and
  // BENCH_NODE_FLAGS (space-separated) are given to the server's Node, to try a V8 setting (--max-semi-space-size=32, say).
  const profile = process.env.BENCH_PROFILE_DIR ? ['--cpu-prof', `--cpu-prof-dir=${process.env.BENCH_PROFILE_DIR}`] : [];
  const flags = (process.env.BENCH_NODE_FLAGS ?? '').split(' ').filter(Boolean);
  const child = spawn(process.execPath, [...flags, '--import', 'tsx', ...profile, 'server/serve.ts'], {
    cwd: root,
    // The probe student starts and submits more practice runs in a few minutes than any student would: their limits are lifted.
    env: {
      ...process.env,
      DATABASE_URL: databaseUrl,
      PORT: '0',
      NODE_ENV: 'production',
      PUBLIC_URL: 'http://localhost',
      SESSION_SECRET: SECRET,
      PRACTICE_STARTS_PER_HOUR: '100000',
      SUBMISSIONS_PER_HOUR: '100000',
      WEB_PROCESSES: String(PROCESSES),
    },
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  const url = await new Promise<string>((resolve, reject) => {
    let buffer = '';
    child.stdout!.on('data', (chunk: Buffer) => {
      buffer += chunk.toString();
      const line = buffer.split('\n').find((l) => l.includes('"listening"'));
      if (line) resolve((JSON.parse(line) as { listening: string }).listening);
    });
    child.once('exit', (code) => reject(new Error(`server exited early (${code})`)));
  });
  return { url, child };
}

async function main() {
  // Other work on the machine (or its host) slows every figure: say how busy it was before starting.
  const loadBefore = loadavg()[0]!;
  // And how much tasks wait for a CPU with nothing of ours running (on a shared host, not always 0).
  const idleWait = await cpuWaitShare(() => new Promise((r) => setTimeout(r, 3000)));
  await withTestCluster(async (env) => {
    const base = env.LOADLINE_TEST_PG!;
    const dbName = `bench_${randomBytes(4).toString('hex')}`;
    const admin = new pg.Client({ connectionString: `${base}postgres` });
    await admin.connect();
    await admin.query(`create database ${dbName} template ${env.LOADLINE_TEST_TEMPLATE}`);
    await admin.end();
    const databaseUrl = `${base}${dbName}`;
    const db = new pg.Client({ connectionString: databaseUrl });
    await db.connect();

    // A published scenario from the demo library, and a class of load-test students with live sessions.
    const scenario = await db.query<{ id: number }>('select id from scenarios where published_version_id is not null order by id limit 1');
    const scenarioId = scenario.rows[0]?.id;
    if (!scenarioId) throw new Error('the demo library has no published scenario');
    const instructor = await db.query<{ id: number }>("select id from users where role = 'instructor' order by id limit 1");
    const klass = await db.query<{ id: number }>("insert into classes (name, term) values ('Load class', 'Bench') returning id");
    const classId = klass.rows[0]!.id;
    await db.query('insert into class_instructors (class_id, user_id) values ($1, $2)', [classId, instructor.rows[0]!.id]);
    const hash = await hashPassword(DEMO_PASSWORD);
    const students: { id: number; cookie: string; csrf: string }[] = [];
    const sessionFor = async (userId: number, role: string) => {
      const sid = randomBytes(18).toString('base64url');
      const csrf = randomBytes(18).toString('base64url');
      const expires = new Date(Date.now() + 8 * 3600_000);
      const sess = { cookie: { originalMaxAge: 8 * 3600_000, expires, httpOnly: true, path: '/', sameSite: 'lax', secure: false }, userId, role, csrfToken: csrf };
      await db.query('insert into session (sid, sess, expire) values ($1, $2, $3)', [sid, JSON.stringify(sess), expires]);
      return { cookie: signedCookie(sid), csrf };
    };
    for (let i = 0; i < STUDENTS + 1; i++) {
      const u = await db.query<{ id: number }>(
        "insert into users (email, name, role, password_hash) values ($1, $2, 'student', $3) returning id",
        [`load.${i}@cindervalley.example`, `Load Student ${i}`, hash],
      );
      const id = u.rows[0]!.id;
      await db.query('insert into enrollments (class_id, user_id) values ($1, $2)', [classId, id]);
      students.push({ id, ...(await sessionFor(id, 'student')) });
    }
    const teacher = await sessionFor(instructor.rows[0]!.id, 'instructor');

    const server = await startServerProcess(databaseUrl);
    // node:http with kept-alive sockets: far cheaper per request than fetch, so the load generator takes less of the cores it shares with the server.
    // Each student is a browser of their own, with its own kept-alive connections (up to six, as a browser opens to one host)
    // used request after request. One agent shared by all would keep a few sockets busy, let the rest idle out, and open new
    // ones all at once whenever latency rose, which no class of browsers does.
    const agents = new Map<string, http.Agent>();
    const agentOf = (who: { cookie: string }) => {
      let a = agents.get(who.cookie);
      if (!a) agents.set(who.cookie, (a = new http.Agent({ keepAlive: true, maxSockets: 6 })));
      return a;
    };
    const target = new URL(server.url);
    // `parse: false` leaves a 2xx body unparsed (the bytes are still read): the students' own load only needs the status, and
    // parsing hundreds of answers a second would take cores the server shares. Every answer's size is counted, by kind.
    const call = (who: { cookie: string; csrf: string }, method: string, path: string, body?: unknown, opts: { parse?: boolean; bytes?: (n: number) => void } = {}) =>
      new Promise<{ status: number; body: unknown; serverTiming?: string; serverMs: number }>((resolve, reject) => {
        const payload = body === undefined ? undefined : JSON.stringify(body);
        const req = http.request(
          {
            agent: agentOf(who),
            host: target.hostname,
            port: target.port,
            method,
            path,
            headers: {
              Cookie: who.cookie,
              'X-CSRF-Token': who.csrf,
              Accept: 'application/json',
              ...(payload === undefined ? {} : { 'Content-Type': 'application/json', 'Content-Length': Buffer.byteLength(payload) }),
            },
          },
          (res) => {
            const chunks: Buffer[] = [];
            res.on('data', (c: Buffer) => chunks.push(c));
            res.on('end', () => {
              const data = Buffer.concat(chunks);
              opts.bytes?.(data.length);
              const status = res.statusCode ?? 0;
              const header = res.headers['server-timing'];
              const serverTiming = Array.isArray(header) ? header.join(', ') : header;
              // Every API answer carries the server's own total (server/http/server-timing.ts).
              const serverMs = parseServerTiming(serverTiming).total ?? Number.NaN;
              if (opts.parse === false && status >= 200 && status < 300) {
                resolve({ status, body: null, serverMs });
                return;
              }
              const text = data.toString();
              try {
                resolve({ status, body: text ? (JSON.parse(text) as unknown) : null, serverMs, ...(serverTiming ? { serverTiming } : {}) });
              } catch (err) {
                reject(err instanceof Error ? err : new Error(String(err)));
              }
            });
            res.on('error', reject);
          },
        );
        req.on('error', reject);
        req.end(payload);
      });

    try {
      const attemptIds: number[] = [];
      for (const s of students) {
        const res = await call(s, 'POST', '/api/attempts', { scenarioId, mode: 'practice' });
        if (res.status !== 201) throw new Error(`starting an attempt answered ${res.status}: ${JSON.stringify(res.body)}`);
        attemptIds.push((res.body as { attempt: { id: number } }).attempt.id);
      }

      // What one request costs, in CPU time of the server and of PostgreSQL, with 20 requests in flight and no other load.
      const costs: { label: string; n: number; serverMs: number; postgresMs: number }[] = [];
      const measureCost = async (label: string, n: number, f: (k: number) => Promise<{ status: number }>) => {
        const s0 = cpuSeconds({ tree: server.child.pid });
        const p0 = cpuSeconds({ comm: 'postgres' });
        let next = 0;
        await Promise.all(
          Array.from({ length: 20 }, async () => {
            while (next < n) {
              const res = await f(next++);
              if (res.status !== 200) throw new Error(`${label} answered ${res.status}`);
            }
          }),
        );
        costs.push({ label, n, serverMs: ((cpuSeconds({ tree: server.child.pid }) - s0) * 1000) / n, postgresMs: ((cpuSeconds({ comm: 'postgres' }) - p0) * 1000) / n });
      };
      const seqs = new Map<number, number>();
      const batchFor = (attemptId: number) => {
        const seq = seqs.get(attemptId) ?? 0;
        seqs.set(attemptId, seq + 5);
        const atMs = seq * 10;
        return { events: Array.from({ length: 5 }, (_, k) => ({ seq: seq + k + 1, event: { kind: 'pile', atMs: atMs + k * 10, dial01: ((seq + k) % 10) / 20 } })) };
      };
      const postOne = (k: number) => call(students[k % STUDENTS]!, 'POST', `/api/attempts/${attemptIds[k % STUDENTS]!}/events`, batchFor(attemptIds[k % STUDENTS]!));
      await measureCost('warm-up', 1000, postOne);
      costs.length = 0;
      await measureCost('post-events', 2000, postOne);
      await measureCost('read-attempt', 1000, (k) => call(students[k % STUDENTS]!, 'GET', `/api/attempts/${attemptIds[k % STUDENTS]!}`));
      await measureCost('signed-in-me', 1000, (k) => call(students[k % STUDENTS]!, 'GET', '/api/auth/me'));

      // The instructor's live board stream stays open throughout.
      const board = new AbortController();
      let boardMessages = 0;
      let boardStatus = 0;
      const boardPath = `/api/live/classes/${classId}/stream`;
      void fetch(`${server.url}${boardPath}`, { headers: { Cookie: teacher.cookie, Accept: 'text/event-stream' }, signal: board.signal })
        .then(async (res) => {
          boardStatus = res.status;
          if (!res.ok || !res.body) return;
          const reader = res.body.getReader();
          for (;;) {
            const { done, value } = await reader.read();
            if (done) break;
            boardMessages += (Buffer.from(value).toString().match(/\n\n/g) ?? []).length;
          }
        })
        .catch(() => undefined);

      // The grading probes: 10-minute attempts, posted and submitted during the rounds (and one per round stored before them, out of order).
      const probe = students[STUDENTS]!;
      const script = [
        { kind: 'lead', atMs: 0, which: 'red', point: 'battery-pos' },
        { kind: 'lead', atMs: 0, which: 'black', point: 'battery-neg' },
        { kind: 'clamp', atMs: 0, conductor: 'bplus-cable', arrow: 'toward-battery' },
        { kind: 'key', atMs: 1000, position: 'start' },
        { kind: 'key', atMs: 2500, position: 'on' },
      ] as Record<string, unknown>[];
      for (let t = 10_000; t < 600_000; t += 20_000) {
        script.push({ kind: 'rpm', atMs: t, rpm: 2000 }, { kind: 'pile', atMs: t + 5_000, dial01: 0.45 }, { kind: 'pile', atMs: t + 12_000, dial01: 0 }, { kind: 'rpm', atMs: t + 15_000, rpm: 750 });
      }
      const probeEvents = script.map((event, i) => ({ seq: i + 1, event }));
      // Submitted at the ten-minute mark, after the last event of the script.
      const submitAtMs = Math.max(600_000, ...script.map((e) => e.atMs as number));
      const newProbeAttempt = async () => {
        const started = await call(probe, 'POST', '/api/attempts', { scenarioId, mode: 'practice' });
        if (started.status !== 201) throw new Error(`starting the probe attempt answered ${started.status}: ${JSON.stringify(started.body)}`);
        return (started.body as { attempt: { id: number } }).attempt.id;
      };
      const storeEvents = async (id: number, events: typeof probeEvents) => {
        const stored = await call(probe, 'POST', `/api/attempts/${id}/events`, { events });
        if (stored.status !== 200) throw new Error(`storing probe events answered ${stored.status}: ${JSON.stringify(stored.body)}`);
      };
      /** A log stored with event 1 last: the events route sends nothing ahead, so its submission re-runs from the start. */
      const storeOutOfOrder = async (id: number) => {
        await storeEvents(id, probeEvents.slice(1));
        await storeEvents(id, probeEvents.slice(0, 1));
      };
      /** The probe's log in PROBE_BATCHES batches: all but the last are posted while the student works, the last just before submitting. */
      const per = Math.ceil(probeEvents.length / PROBE_BATCHES);
      const probeBatches = Array.from({ length: Math.ceil(probeEvents.length / per) }, (_, i) => probeEvents.slice(i * per, (i + 1) * per));
      /** Posts all but the last batch of each attempt, spread until `untilMs` (performance.now). */
      const postWhileWorking = async (ids: number[], untilMs: number) => {
        const gapMs = Math.max(0, untilMs - performance.now()) / probeBatches.length;
        for (let i = 0; i + 1 < probeBatches.length; i++) {
          if (i > 0) await new Promise((r) => setTimeout(r, gapMs));
          for (const id of ids) await storeEvents(id, probeBatches[i]!);
        }
      };
      const postLastBatch = (id: number) => storeEvents(id, probeBatches.at(-1)!);
      const submitProbe = async (id: number) => {
        const t0 = performance.now();
        const res = await call(probe, 'POST', `/api/attempts/${id}/submit`, { atMs: submitAtMs, readings: [], diagnosis: { verdicts: [], faultKind: 'none', notes: '' } });
        const ms = performance.now() - t0;
        if (res.status !== 200) console.log(`  grading probe answered ${res.status}: ${JSON.stringify(res.body)}`);
        // The server's own account (Server-Timing): from the request reaching it to the answer, and the grading inside the worker.
        const parts = parseServerTiming(res.serverTiming);
        return { ms, serverMs: parts.total ?? Number.NaN, workerMs: parts.worker ?? Number.NaN, parts, status: res.status };
      };
      const fromStartAttempts: number[] = [];
      for (let round = 0; round < ROUNDS; round++) {
        const id = await newProbeAttempt();
        await storeOutOfOrder(id);
        fromStartAttempts.push(id);
      }

      // Grading with no load, for comparison: the first grading of this scenario also runs its reference procedures (then kept).
      const gradeIdle = async (ahead: boolean) => {
        const id = await newProbeAttempt();
        if (ahead) {
          await postWhileWorking([id], performance.now() + 1000);
          await postLastBatch(id);
        } else await storeOutOfOrder(id);
        return submitProbe(id);
      };
      const median3 = (gs: { ms: number; serverMs: number; status: number }[]) => ({
        ms: gs.map((g) => g.ms).sort((a, b) => a - b)[1]!,
        serverMs: gs.map((g) => g.serverMs).sort((a, b) => a - b)[1]!,
        status: gs.every((g) => g.status === 200) ? 200 : gs.find((g) => g.status !== 200)!.status,
      });
      const firstGrade = await gradeIdle(false);
      // Idle: the median of three, each way.
      const idleFromStart = median3([await gradeIdle(false), await gradeIdle(false), await gradeIdle(false)]);
      const idleGrade = median3([await gradeIdle(true), await gradeIdle(true), await gradeIdle(true)]);

      // The attempts submitted as a bench does in each round; their logs go in during the round before (the warm-up, for the first).
      const asBenchAttempts: number[][] = [];
      for (let round = 0; round < ROUNDS; round++) asBenchAttempts.push(await Promise.all(Array.from({ length: PROBES_PER_ROUND }, () => newProbeAttempt())));
      const results: RoundResult[] = [];
      let errorsShown = 0;
      // Round -1 is the warm-up: the same load, not counted, and no grading probe.
      for (let round = WARM_UP_MS > 0 ? -1 : 0; round < ROUNDS; round++) {
        const warmUp = round < 0;
        const samples: Sample[] = [];
        const machine0 = machineTicks();
        const waited0 = cpuWaitedUs();
        const cpu0 = { server: cpuSeconds({ tree: server.child.pid }), postgres: cpuSeconds({ comm: 'postgres' }), load: process.cpuUsage() };
        const started = performance.now();
        const until = started + (warmUp ? WARM_UP_MS : DURATION_MS);
        const grading: Graded[] = [];
        const gradingStatus: number[] = [];
        const fromStart: Graded[] = [];
        const readBytes: number[] = [];

        const studentLoop = async (index: number) => {
          const who = students[index]!;
          const attemptId = attemptIds[index]!;
          // Spread the students over the first second so they do not beat in step.
          await new Promise((r) => setTimeout(r, (index / STUDENTS) * BATCH_EVERY_MS));
          let nextRead = performance.now() + READ_EVERY_MS * (index / STUDENTS);
          while (performance.now() < until) {
            const batch = batchFor(attemptId);
            const t0 = performance.now();
            const res = await call(who, 'POST', `/api/attempts/${attemptId}/events`, batch, { parse: false }).catch((err: unknown) => ({ status: 0, body: String(err), serverMs: Number.NaN }));
            if (res.status !== 200 && errorsShown++ < 5) console.log(`  post-events answered ${res.status}: ${JSON.stringify(res.body).slice(0, 300)}`);
            samples.push({ kind: 'post-events', ms: performance.now() - t0, serverMs: res.serverMs, ok: res.status === 200 });
            if (performance.now() >= nextRead) {
              nextRead += READ_EVERY_MS;
              const t1 = performance.now();
              const read = await call(who, 'GET', `/api/attempts/${attemptId}`, undefined, { parse: false, bytes: (n) => readBytes.push(n) }).catch((err: unknown) => ({ status: 0, body: String(err), serverMs: Number.NaN }));
              if (read.status !== 200 && errorsShown++ < 5) console.log(`  read-attempt answered ${read.status}: ${JSON.stringify(read.body).slice(0, 300)}`);
              samples.push({ kind: 'read-attempt', ms: performance.now() - t1, serverMs: read.serverMs, ok: read.status === 200 });
            }
            const wait = BATCH_EVERY_MS - (performance.now() - t0);
            if (wait > 0) await new Promise((r) => setTimeout(r, wait));
          }
        };

        // The next round's probes work through their logs during this round.
        const working = round + 1 < ROUNDS ? postWhileWorking(asBenchAttempts[round + 1]!, until - 500) : Promise.resolve();
        const probing = (async () => {
          if (warmUp) return;
          // This round's probes send their last batch and submit, at (k + 1) / (PROBES_PER_ROUND + 2) of the round.
          for (let k = 0; k < PROBES_PER_ROUND; k++) {
            const at = started + (DURATION_MS * (k + 1)) / (PROBES_PER_ROUND + 2);
            const id = asBenchAttempts[round]![k]!;
            await new Promise((r) => setTimeout(r, Math.max(0, at - performance.now())));
            await postLastBatch(id);
            const g = await submitProbe(id);
            grading.push(g);
            gradingStatus.push(g.status);
          }
          // Then one with nothing run ahead.
          await new Promise((r) => setTimeout(r, Math.max(0, started + (DURATION_MS * (PROBES_PER_ROUND + 1)) / (PROBES_PER_ROUND + 2) - performance.now())));
          const g = await submitProbe(fromStartAttempts[round]!);
          fromStart.push(g);
          gradingStatus.push(g.status);
        })();

        await Promise.all([...Array.from({ length: STUDENTS }, (_, i) => studentLoop(i)), probing, working]);
        const elapsedS = (performance.now() - started) / 1000;
        if (warmUp) continue;
        const loadUsed = process.cpuUsage(cpu0.load);
        const cpu = {
          server: (cpuSeconds({ tree: server.child.pid }) - cpu0.server) / elapsedS,
          postgres: (cpuSeconds({ comm: 'postgres' }) - cpu0.postgres) / elapsedS,
          load: (loadUsed.user + loadUsed.system) / 1e6 / elapsedS,
          machineBusy: (() => {
            const m = machineTicks();
            return m.total > machine0.total ? (m.busy - machine0.busy) / (m.total - machine0.total) : Number.NaN;
          })(),
          waitedForCpu: (cpuWaitedUs() - waited0) / 1e6 / elapsedS,
        };
        const report = (kind: Sample['kind'] | 'all') => {
          const chosen = samples.filter((x) => kind === 'all' || x.kind === kind);
          const sorted = chosen.map((x) => x.ms).sort((a, b) => a - b);
          const onServer = chosen.map((x) => x.serverMs).filter((x) => !Number.isNaN(x)).sort((a, b) => a - b);
          return { count: chosen.length, p50: percentile(sorted, 50), p99: percentile(sorted, 99), serverP99: percentile(onServer, 99), max: sorted.at(-1) ?? Number.NaN, errors: chosen.filter((x) => !x.ok).length };
        };
        results.push({ elapsedS, cpu, all: report('all'), post: report('post-events'), read: report('read-attempt'), grading, gradingStatus, fromStart, readKb: readBytes.reduce((a, b) => a + b, 0) / Math.max(1, readBytes.length) / 1024 });
      }
      board.abort();

      const fmt = (x: number) => x.toFixed(1);
      console.log(`API under load: ${STUDENTS} students on loopback, ${ROUNDS} rounds of ${DURATION_MS / 1000} s after a ${WARM_UP_MS / 1000} s warm-up under the same load, ${PROCESSES} server process${PROCESSES === 1 ? '' : 'es'} on one port; load generator, server and PostgreSQL share this ${cpus().length}-core machine`);
      console.log(`  machine before starting: load average ${loadBefore.toFixed(1)} on ${cpus().length} cores (a benchmark just before, or other work, raises it and slows the figures); with nothing of ours running, some task waited for a CPU ${(idleWait * 100).toFixed(0)} % of 3 s (the host's other work, on a virtual machine)`);
      results.forEach((r, i) => {
        console.log(
          `  round ${i + 1}: ${(r.all.count / r.elapsedS).toFixed(0)} requests/s; cores used: server ${r.cpu.server.toFixed(2)}, PostgreSQL ${r.cpu.postgres.toFixed(2)}, load generator ${r.cpu.load.toFixed(2)}; machine ${(r.cpu.machineBusy * 100).toFixed(0)} % busy, some task waiting for a CPU ${(r.cpu.waitedForCpu * 100).toFixed(0)} % of the time`,
        );
        for (const [name, x] of [['post-events', r.post], ['read-attempt', r.read], ['all', r.all]] as const) {
          console.log(`    ${name.padEnd(13)} n=${x.count}  p50 ${fmt(x.p50)} ms  p99 ${fmt(x.p99)} ms (on the server ${fmt(x.serverP99)} ms)  max ${fmt(x.max)} ms  errors ${x.errors}${name === 'read-attempt' ? `  (answers of ${fmt(r.readKb)} KB on average)` : ''}`);
        }
        const shown = (gs: Graded[]) => gs.map((g) => `${fmt(g.ms)} (server ${fmt(g.serverMs)}, worker ${fmt(g.workerMs)})`).join(', ');
        console.log(
          `    grading a 10-minute attempt under load, round trip (server's own total, in the grading worker) ms: as a bench submits ${shown(r.grading)}; from the start ${shown(r.fromStart)} (status ${[...new Set(r.gradingStatus)].join(', ')})`,
        );
      });
      console.log('  CPU time per request (20 in flight, no other load):');
      for (const c of costs) console.log(`    ${c.label.padEnd(13)} server ${c.serverMs.toFixed(2)} ms   PostgreSQL ${c.postgresMs.toFixed(2)} ms   (n=${c.n})`);
      const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
      const spread = (xs: number[]) => (Math.max(...xs) - Math.min(...xs)) / mean(xs);
      const p99s = results.map((r) => r.all.p99);
      const p50s = results.map((r) => r.all.p50);
      const rates = results.map((r) => r.all.count / r.elapsedS);
      const sortedBy = (gs: Graded[], key: 'ms' | 'serverMs' | 'workerMs') => gs.map((g) => g[key]).sort((x, y) => x - y);
      const asBench = results.flatMap((r) => r.grading);
      const roundTrips = sortedBy(asBench, 'ms');
      const serverSide = sortedBy(asBench, 'serverMs');
      const fromStartAll = results.flatMap((r) => r.fromStart);
      const fromStartServer = sortedBy(fromStartAll, 'serverMs');
      const fromStartTrips = sortedBy(fromStartAll, 'ms');
      const errors = results.reduce((n, r) => n + r.all.errors + r.gradingStatus.filter((st) => st !== 200).length, 0);
      console.log('  summary (mean of the rounds; noise = spread between rounds, (max - min) / mean):');
      console.log(`    throughput   ${mean(rates).toFixed(0)} requests/s   noise ±${((spread(rates) * 100) / 2).toFixed(0)} %`);
      console.log(`    p50          ${fmt(mean(p50s))} ms   noise ±${((spread(p50s) * 100) / 2).toFixed(0)} %`);
      console.log(`    p99          ${fmt(mean(p99s))} ms   goal < 50 ms: ratio ${(mean(p99s) / 50).toFixed(2)} ${mean(p99s) < 50 ? '(met)' : '(NOT met)'}   noise ±${((spread(p99s) * 100) / 2).toFixed(0)} %`);
      // The part of the round trip that is the server's own work and waiting (its first middleware to the answer's head, by its
      // Server-Timing total); the rest is the kernel, the wait for a turn of the server's event loop before that, and the load
      // generator's own, on the cores it shares.
      console.log(`                 on the server (Server-Timing total) ${fmt(mean(results.map((r) => r.all.serverP99)))} ms; the rest of the round trip is the kernel, the wait for the server's event loop to take the request, and the load generator`);
      console.log(`    errors       ${errors}   goal 0 ${errors === 0 ? '(met)' : '(NOT met)'}`);
      // The goal is the server's grading (the issue's words): from the request reaching the server to its answer, as its Server-Timing says.
      // The round trip adds the kernel's and the load generator's queueing; it is shown beside it.
      const serverMax = serverSide.at(-1)!;
      const slowest = asBench.find((g) => g.serverMs === serverMax);
      console.log(
        `    grading      as a bench submits (run ahead), on the server: median ${fmt(percentile(serverSide, 50))} ms, slowest ${fmt(serverMax)} ms of ${serverSide.length} under load; ${fmt(idleGrade.serverMs)} ms idle (median of 3, status ${idleGrade.status})   goal: every one < 100 ms: slowest ratio ${(serverMax / 100).toFixed(2)} ${serverMax < 100 ? '(met)' : '(NOT met)'}`,
      );
      console.log(
        `                 the slowest on the server, by part (ms): ${Object.entries(slowest?.parts ?? {}).map(([k, v]) => `${k} ${fmt(v)}`).join(', ')}`,
      );
      console.log(
        `                 round trip as the bench saw it: median ${fmt(percentile(roundTrips, 50))} ms, slowest ${fmt(roundTrips.at(-1)!)} ms (ratio to 100 ms ${(roundTrips.at(-1)! / 100).toFixed(2)}); ${fmt(idleGrade.ms)} ms idle`,
      );
      console.log(
        `                 from the start (nothing run ahead, as after a restart): slowest on the server ${fmt(fromStartServer.at(-1)!)} ms, round trip ${fmt(fromStartTrips.at(-1)!)} ms, of ${fromStartAll.length} under load (server ratio to 100 ms ${(fromStartServer.at(-1)! / 100).toFixed(2)}); ${fmt(idleFromStart.serverMs)} ms on the server idle (median of 3, status ${idleFromStart.status}); the scenario's first grading, with its reference procedures: ${fmt(firstGrade.serverMs)} ms on the server`,
      );
      console.log(`    live board   stream status ${boardStatus}, ${boardMessages} messages received`);
    } finally {
      for (const a of agents.values()) a.destroy();
      server.child.kill('SIGTERM');
      await db.end();
    }
  });
}

await main();
