/**
 * `npm run bench:api`: 300 simulated students on loopback, each posting event
 * batches and reading their attempt, while an instructor's live board is
 * open, against one server process on a throwaway database. Prints
 * throughput, latency percentiles and errors beside the goals, and the time
 * the server takes to grade a 10-minute attempt under that load.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createHmac, randomBytes } from 'node:crypto';
import { cpus } from 'node:os';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { hashPassword } from '../server/auth/passwords.ts';
import { DEMO_PASSWORD } from '../server/db/demo-people.ts';
import { withTestCluster } from './test-cluster.ts';

const root = fileURLToPath(new URL('..', import.meta.url));
const STUDENTS = Number(process.env.BENCH_STUDENTS ?? 300);
const DURATION_MS = Number(process.env.BENCH_SECONDS ?? 15) * 1000;
const BATCH_EVERY_MS = 1000;
const READ_EVERY_MS = 2000;
const ROUNDS = 2;
const SECRET = 'bench-secret-bench-secret-bench-secret';

interface Sample {
  kind: 'post-events' | 'read-attempt';
  ms: number;
  ok: boolean;
}

interface Figures {
  count: number;
  p50: number;
  p99: number;
  max: number;
  errors: number;
}

interface RoundResult {
  elapsedS: number;
  all: Figures;
  post: Figures;
  read: Figures;
  gradingMs: number;
  gradingStatus: number;
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
  // Node itself with tsx's loader, so the pid held is the server's; BENCH_PROFILE_DIR writes a CPU profile there.
  const profile = process.env.BENCH_PROFILE_DIR ? ['--cpu-prof', `--cpu-prof-dir=${process.env.BENCH_PROFILE_DIR}`] : [];
  const child = spawn(process.execPath, ['--import', 'tsx', ...profile, 'server/serve.ts'], {
    cwd: root,
    env: { ...process.env, DATABASE_URL: databaseUrl, PORT: '0', NODE_ENV: 'production', SESSION_SECRET: SECRET, SIGN_IN_LIMIT: '100000' },
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
    const call = async (who: { cookie: string; csrf: string }, method: string, path: string, body?: unknown) => {
      const res = await fetch(`${server.url}${path}`, {
        method,
        headers: { Cookie: who.cookie, 'X-CSRF-Token': who.csrf, 'Content-Type': 'application/json', Accept: 'application/json' },
        body: body === undefined ? undefined : JSON.stringify(body),
      });
      const text = await res.text();
      return { status: res.status, body: text ? (JSON.parse(text) as unknown) : null };
    };

    try {
      const attemptIds: number[] = [];
      for (const s of students) {
        const res = await call(s, 'POST', '/api/attempts', { scenarioId, mode: 'practice' });
        if (res.status !== 201) throw new Error(`starting an attempt answered ${res.status}: ${JSON.stringify(res.body)}`);
        attemptIds.push((res.body as { attempt: { id: number } }).attempt.id);
      }

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

      // The grading probe: a 10-minute attempt per round, stored before the load starts and submitted during it.
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
      const probeAttempts: number[] = [];
      for (let round = 0; round < ROUNDS; round++) {
        const started = await call(probe, 'POST', '/api/attempts', { scenarioId, mode: 'practice' });
        if (started.status !== 201) throw new Error(`starting the probe attempt answered ${started.status}: ${JSON.stringify(started.body)}`);
        const id = (started.body as { attempt: { id: number } }).attempt.id;
        const stored = await call(probe, 'POST', `/api/attempts/${id}/events`, { events: probeEvents });
        if (stored.status !== 200) throw new Error(`storing the probe events answered ${stored.status}: ${JSON.stringify(stored.body)}`);
        probeAttempts.push(id);
      }

      // Grading with no load, for comparison.
      const idleProbe = await call(probe, 'POST', '/api/attempts', { scenarioId, mode: 'practice' });
      const idleId = (idleProbe.body as { attempt: { id: number } }).attempt.id;
      await call(probe, 'POST', `/api/attempts/${idleId}/events`, { events: probeEvents });
      const idleT0 = performance.now();
      const idleGrade = await call(probe, 'POST', `/api/attempts/${idleId}/submit`, { atMs: submitAtMs, readings: [], diagnosis: { verdicts: [], faultKind: 'none', notes: '' } });
      const idleGradingMs = performance.now() - idleT0;

      const seqs = new Map<number, number>();
      const results: RoundResult[] = [];
      for (let round = 0; round < ROUNDS; round++) {
        const samples: Sample[] = [];
        const started = performance.now();
        const until = started + DURATION_MS;
        let gradingMs = Number.NaN;
        let gradingStatus = 0;

        const studentLoop = async (index: number) => {
          const who = students[index]!;
          const attemptId = attemptIds[index]!;
          // Spread the students over the first second so they do not beat in step.
          await new Promise((r) => setTimeout(r, (index / STUDENTS) * BATCH_EVERY_MS));
          let nextRead = performance.now() + READ_EVERY_MS * (index / STUDENTS);
          while (performance.now() < until) {
            const seq = seqs.get(attemptId) ?? 0;
            const atMs = seq * 10;
            const events = Array.from({ length: 5 }, (_, k) => ({ seq: seq + k + 1, event: { kind: 'pile', atMs: atMs + k * 10, dial01: ((seq + k) % 10) / 20 } }));
            seqs.set(attemptId, seq + 5);
            const t0 = performance.now();
            const res = await call(who, 'POST', `/api/attempts/${attemptId}/events`, { events }).catch(() => ({ status: 0, body: null }));
            samples.push({ kind: 'post-events', ms: performance.now() - t0, ok: res.status === 200 });
            if (performance.now() >= nextRead) {
              nextRead += READ_EVERY_MS;
              const t1 = performance.now();
              const read = await call(who, 'GET', `/api/attempts/${attemptId}`).catch(() => ({ status: 0, body: null }));
              samples.push({ kind: 'read-attempt', ms: performance.now() - t1, ok: read.status === 200 });
            }
            const wait = BATCH_EVERY_MS - (performance.now() - t0);
            if (wait > 0) await new Promise((r) => setTimeout(r, wait));
          }
        };

        const grading = (async () => {
          await new Promise((r) => setTimeout(r, DURATION_MS / 2));
          const t0 = performance.now();
          const res = await call(probe, 'POST', `/api/attempts/${probeAttempts[round]!}/submit`, {
            atMs: submitAtMs,
            readings: [],
            diagnosis: { verdicts: [], faultKind: 'none', notes: '' },
          });
          gradingMs = performance.now() - t0;
          gradingStatus = res.status;
          if (res.status !== 200) console.log(`  grading probe answered ${res.status}: ${JSON.stringify(res.body)}`);
        })();

        await Promise.all([...Array.from({ length: STUDENTS }, (_, i) => studentLoop(i)), grading]);
        const elapsedS = (performance.now() - started) / 1000;
        const report = (kind: Sample['kind'] | 'all') => {
          const chosen = samples.filter((x) => kind === 'all' || x.kind === kind);
          const sorted = chosen.map((x) => x.ms).sort((a, b) => a - b);
          return { count: chosen.length, p50: percentile(sorted, 50), p99: percentile(sorted, 99), max: sorted.at(-1) ?? Number.NaN, errors: chosen.filter((x) => !x.ok).length };
        };
        results.push({ elapsedS, all: report('all'), post: report('post-events'), read: report('read-attempt'), gradingMs, gradingStatus });
      }
      board.abort();

      const fmt = (x: number) => x.toFixed(1);
      console.log(`API under load: ${STUDENTS} students on loopback, ${ROUNDS} rounds of ${DURATION_MS / 1000} s, one server process; load generator, server and PostgreSQL share this ${cpus().length}-core machine`);
      results.forEach((r, i) => {
        console.log(`  round ${i + 1}: ${(r.all.count / r.elapsedS).toFixed(0)} requests/s`);
        for (const [name, x] of [['post-events', r.post], ['read-attempt', r.read], ['all', r.all]] as const) {
          console.log(`    ${name.padEnd(13)} n=${x.count}  p50 ${fmt(x.p50)} ms  p99 ${fmt(x.p99)} ms  max ${fmt(x.max)} ms  errors ${x.errors}`);
        }
        console.log(`    grading a 10-minute attempt under load: ${fmt(r.gradingMs)} ms (status ${r.gradingStatus})`);
      });
      const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
      const spread = (xs: number[]) => (Math.max(...xs) - Math.min(...xs)) / mean(xs);
      const p99s = results.map((r) => r.all.p99);
      const p50s = results.map((r) => r.all.p50);
      const rates = results.map((r) => r.all.count / r.elapsedS);
      const gradings = results.map((r) => r.gradingMs);
      const errors = results.reduce((n, r) => n + r.all.errors + (r.gradingStatus === 200 ? 0 : 1), 0);
      console.log('  summary (mean of the rounds; noise = spread between rounds, (max - min) / mean):');
      console.log(`    throughput   ${mean(rates).toFixed(0)} requests/s   noise ±${((spread(rates) * 100) / 2).toFixed(0)} %`);
      console.log(`    p50          ${fmt(mean(p50s))} ms   noise ±${((spread(p50s) * 100) / 2).toFixed(0)} %`);
      console.log(`    p99          ${fmt(mean(p99s))} ms   goal < 50 ms: ratio ${(mean(p99s) / 50).toFixed(2)} ${mean(p99s) < 50 ? '(met)' : '(NOT met)'}   noise ±${((spread(p99s) * 100) / 2).toFixed(0)} %`);
      console.log(`    errors       ${errors}   goal 0 ${errors === 0 ? '(met)' : '(NOT met)'}`);
      console.log(`    grading      ${fmt(mean(gradings))} ms under load, ${fmt(idleGradingMs)} ms idle (status ${idleGrade.status})   goal < 100 ms: ratio ${(mean(gradings) / 100).toFixed(2)} ${mean(gradings) < 100 ? '(met)' : '(NOT met)'}   noise ±${((spread(gradings) * 100) / 2).toFixed(0)} %`);
      console.log(`    live board   stream status ${boardStatus}, ${boardMessages} messages received`);
    } finally {
      server.child.kill('SIGTERM');
      await db.end();
    }
  });
}

await main();
