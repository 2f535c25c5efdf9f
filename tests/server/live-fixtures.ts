/**
 * Fixtures for the live, replay and compare tests: a class with an instructor
 * and students, a scenario version with one fault, an assignment, attempts;
 * plus a cookie-keeping HTTP client and a Server-Sent Events reader for
 * talking to real listening servers (one or several processes).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { once } from 'node:events';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { eq } from 'drizzle-orm';
import type { Db } from '../../server/db/client.ts';
import { DEMO_PASSWORD, DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { assignments, attempts, classes, classInstructors, enrollments, scenarios, scenarioVersions, users } from '../../server/db/schema.ts';
import { blankScenario, type ScenarioDefinition } from '../../shared/scenario.ts';
import { createAppServer, listen as listenApp } from '../../server/http/app-server.ts';
import { TEST_LIMITS, type TestApp } from './support.ts';

export const instructor = DEMO_PEOPLE.filter((p) => p.role === 'instructor')[0]!;
/** An instructor who does not teach the fixture class. */
export const otherInstructor = DEMO_PEOPLE.filter((p) => p.role === 'instructor')[1]!;
export const students = DEMO_PEOPLE.filter((p) => p.role === 'student');

export async function userId(db: Db, email: string): Promise<number> {
  const [row] = await db.select({ id: users.id }).from(users).where(eq(users.email, email));
  if (!row) throw new Error(`no user ${email}`);
  return row.id;
}

export function scenarioWithFault(kind: ScenarioDefinition['faults'][number]['kind'] = 'diode-open'): ScenarioDefinition {
  const def = blankScenario();
  def.title = 'Dim lamps at idle';
  def.faults = [{ id: 'scenario-fault', kind, severity01: 1, onsetS: 0, intermittent: null }];
  if (!def.diagnosisChoices.includes(kind)) def.diagnosisChoices = [kind, ...def.diagnosisChoices];
  return def;
}

export interface ClassFixture {
  classId: number;
  instructorId: number;
  studentIds: number[];
  scenarioVersionId: number;
  assignmentId: number;
}

/** A class taught by the first demo instructor, with the given students enrolled and one assignment. */
export async function makeClass(db: Db, opts: { students: number; definition?: ScenarioDefinition; name?: string } = { students: 2 }): Promise<ClassFixture> {
  const instructorId = await userId(db, instructor.email);
  const studentIds = await Promise.all(students.slice(0, opts.students).map((s) => userId(db, s.email)));
  const definition = opts.definition ?? scenarioWithFault();
  const [cls] = await db.insert(classes).values({ name: opts.name ?? 'Charging systems, evening section', term: 'Winter' }).returning({ id: classes.id });
  await db.insert(classInstructors).values({ classId: cls!.id, userId: instructorId });
  if (studentIds.length) await db.insert(enrollments).values(studentIds.map((u) => ({ classId: cls!.id, userId: u })));
  const slug = `fixture-${cls!.id}-${Math.random().toString(36).slice(2, 8)}`;
  const [sc] = await db.insert(scenarios).values({ slug, ownerId: instructorId, visibility: 'shared', latestVersion: 1 }).returning({ id: scenarios.id });
  const [ver] = await db
    .insert(scenarioVersions)
    .values({ scenarioId: sc!.id, version: 1, title: definition.title, definition, createdBy: instructorId })
    .returning({ id: scenarioVersions.id });
  await db.update(scenarios).set({ publishedVersionId: ver!.id }).where(eq(scenarios.id, sc!.id));
  const [asg] = await db
    .insert(assignments)
    .values({
      classId: cls!.id,
      scenarioVersionId: ver!.id,
      title: 'Week 3 bench check',
      opensAt: new Date(Date.now() - 86_400_000),
      dueAt: new Date(Date.now() + 86_400_000),
      createdBy: instructorId,
    })
    .returning({ id: assignments.id });
  return { classId: cls!.id, instructorId, studentIds, scenarioVersionId: ver!.id, assignmentId: asg!.id };
}

/** A running assigned attempt, as the attempts route would start it. */
export async function makeAttempt(db: Db, fx: ClassFixture, studentId: number, seed = 11): Promise<number> {
  const [row] = await db
    .insert(attempts)
    .values({ userId: studentId, scenarioVersionId: fx.scenarioVersionId, assignmentId: fx.assignmentId, mode: 'assigned', seed })
    .returning({ id: attempts.id });
  return row!.id;
}

// ---------------------------------------------------------------------------
// HTTP against a listening server

export interface HttpClient {
  baseUrl: string;
  cookie: string;
  csrf: string;
  get(path: string): Promise<{ status: number; body: unknown; text: string; headers: Headers }>;
  post(path: string, body: unknown): Promise<{ status: number; body: unknown; text: string }>;
}

function cookieOf(res: Response, previous: string, name = 'loadline.sid'): string {
  const set = res.headers.getSetCookie().find((c) => c.startsWith(`${name}=`));
  return set ? set.split(';')[0]! : previous;
}

export async function httpSignIn(baseUrl: string, email: string, password = DEMO_PASSWORD): Promise<HttpClient> {
  // Before sign-in the CSRF token is bound to a cookie of its own (no session is stored for a visitor).
  const me = await fetch(`${baseUrl}/api/auth/me`);
  let cookie = cookieOf(me, '', 'loadline.csrf');
  const first = (await me.json()) as { csrfToken: string };
  const res = await fetch(`${baseUrl}/api/auth/sign-in`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json', Cookie: cookie, 'X-CSRF-Token': first.csrfToken },
    body: JSON.stringify({ email, password }),
  });
  if (res.status !== 200) throw new Error(`sign-in of ${email} failed: ${res.status} ${await res.text()}`);
  cookie = cookieOf(res, '');
  const body = (await res.json()) as { csrfToken: string };
  const client: HttpClient = {
    baseUrl,
    cookie,
    csrf: body.csrfToken,
    async get(path) {
      const r = await fetch(`${baseUrl}${path}`, { headers: { Cookie: client.cookie } });
      const text = await r.text();
      return { status: r.status, text, body: text && r.headers.get('content-type')?.includes('json') ? JSON.parse(text) : undefined, headers: r.headers };
    },
    async post(path, payload) {
      const r = await fetch(`${baseUrl}${path}`, {
        method: 'POST',
        headers: { 'Content-Type': 'application/json', Cookie: client.cookie, 'X-CSRF-Token': client.csrf },
        body: JSON.stringify(payload),
      });
      const text = await r.text();
      return { status: r.status, text, body: text ? JSON.parse(text) : undefined };
    },
  };
  return client;
}

export interface SseMessage {
  event: string;
  id: string | null;
  data: unknown;
}

export interface SseReader {
  status: number;
  messages: SseMessage[];
  /** The next message (after those already taken) that matches, within the timeout. */
  next(match?: (m: SseMessage) => boolean, timeoutMs?: number): Promise<SseMessage>;
  /** Whether a matching message arrives within the time (false when none did). */
  arrives(match: (m: SseMessage) => boolean, withinMs: number): Promise<boolean>;
  close(): void;
}

export async function openStream(client: HttpClient, path: string, lastEventId?: string): Promise<SseReader> {
  const abort = new AbortController();
  const headers: Record<string, string> = { Cookie: client.cookie, Accept: 'text/event-stream' };
  if (lastEventId) headers['Last-Event-ID'] = lastEventId;
  const res = await fetch(`${client.baseUrl}${path}`, { headers, signal: abort.signal });
  const messages: SseMessage[] = [];
  let taken = 0;
  const waiters = new Set<() => void>();
  const wake = () => waiters.forEach((w) => w());
  if (res.ok && res.body) {
    const reader = res.body.getReader();
    const decoder = new TextDecoder();
    let buffer = '';
    void (async () => {
      try {
        for (;;) {
          const { value, done } = await reader.read();
          if (done) break;
          buffer += decoder.decode(value, { stream: true });
          let cut: number;
          while ((cut = buffer.indexOf('\n\n')) >= 0) {
            const block = buffer.slice(0, cut);
            buffer = buffer.slice(cut + 2);
            let event = 'message';
            let id: string | null = null;
            const data: string[] = [];
            for (const line of block.split('\n')) {
              if (line.startsWith('event: ')) event = line.slice(7);
              else if (line.startsWith('id: ')) id = line.slice(4);
              else if (line.startsWith('data: ')) data.push(line.slice(6));
            }
            if (data.length) {
              messages.push({ event, id, data: JSON.parse(data.join('\n')) });
              wake();
            }
          }
        }
      } catch {
        // aborted
      }
    })();
  }
  const findFrom = (match: (m: SseMessage) => boolean) => {
    for (let i = taken; i < messages.length; i++) if (match(messages[i]!)) return i;
    return -1;
  };
  const stream: SseReader = {
    status: res.status,
    messages,
    async next(match = () => true, timeoutMs = 5_000) {
      const until = Date.now() + timeoutMs;
      for (;;) {
        const i = findFrom(match);
        if (i >= 0) {
          taken = i + 1;
          return messages[i]!;
        }
        const left = until - Date.now();
        if (left <= 0) throw new Error(`no matching event on ${path} within ${timeoutMs} ms; got ${JSON.stringify(messages.slice(taken))}`);
        await new Promise<void>((resolve) => {
          const t = setTimeout(done, Math.min(left, 250));
          function done() {
            clearTimeout(t);
            waiters.delete(done);
            resolve();
          }
          waiters.add(done);
        });
      }
    },
    async arrives(match, withinMs) {
      try {
        await stream.next(match, withinMs);
        return true;
      } catch {
        return false;
      }
    },
    close() {
      abort.abort();
    },
  };
  return stream;
}

/** The test app on a real port (SSE needs a connection that stays open). */
export async function listen(t: TestApp): Promise<{ url: string; close(): Promise<void> }> {
  // As the server listens (server/main.ts).
  const server: Server = await listenApp(createAppServer(t.app), 0, '127.0.0.1');
  const port = (server.address() as AddressInfo).port;
  return {
    url: `http://127.0.0.1:${port}`,
    close: () =>
      new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      }),
  };
}

export interface ServerProcess {
  url: string;
  child: ChildProcess;
  /** The pids that serve requests: the child itself, or its WEB_PROCESSES workers. */
  processes: number[];
  stop(): Promise<void>;
}

/** A separate server process (the bare server entry) on the given database. */
export async function spawnServer(databaseUrl: string, env: Record<string, string> = {}): Promise<ServerProcess> {
  const entry = new URL('../../server/serve.ts', import.meta.url).pathname;
  // Node itself with tsx's loader, so the pid held (and signalled) is the server's.
  const child = spawn(process.execPath, ['--import', 'tsx', entry], {
    env: { ...process.env, NODE_ENV: 'test', DATABASE_URL: databaseUrl, PORT: '0', HOST: '127.0.0.1', ...TEST_LIMITS, ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let err = '';
  child.stderr!.on('data', (d: Buffer) => (err += d.toString()));
  let announced: { listening: string; processes?: number[] } = { listening: '' };
  const url = await new Promise<string>((resolve, reject) => {
    let out = '';
    const timer = setTimeout(() => reject(new Error(`server process did not start: ${err} ${out}`)), 90_000);
    child.stdout!.on('data', (d: Buffer) => {
      out += d.toString();
      const line = out.split('\n').find((l) => l.includes('"listening"'));
      if (line) {
        clearTimeout(timer);
        announced = JSON.parse(line) as typeof announced;
        resolve(announced.listening);
      }
    });
    child.on('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`server process exited (${code}): ${err}`));
    });
  });
  return {
    url,
    child,
    processes: announced.processes ?? [child.pid!],
    async stop() {
      if (child.exitCode !== null) return;
      child.kill('SIGTERM');
      await once(child, 'exit');
    },
  };
}

export interface SubmittedFixture {
  timeToDiagnosisMs: number;
  given: string;
  actual?: string[];
  grade: number;
  verdicts?: { test: string; ok: boolean }[];
  mistakes?: string[];
  submittedAt?: Date;
}

/** A submitted, graded attempt with a stored result in the shape the grader writes. */
export async function makeSubmitted(db: Db, fx: ClassFixture, studentId: number, s: SubmittedFixture): Promise<number> {
  const actual = s.actual ?? ['diode-open'];
  const result = {
    grade: s.grade,
    verified: true,
    readings: [],
    verdicts: (s.verdicts ?? []).map((v) => ({ test: v.test, given: v.ok, correct: true, ok: v.ok })),
    fault: { given: s.given, actual, ok: actual.includes(s.given), labels: [] },
    timeToDiagnosisMs: s.timeToDiagnosisMs,
    mistakes: (s.mistakes ?? []).map((kind, i) => ({ kind, atMs: 1000 * i, message: kind })),
    feedback: [],
  };
  const [row] = await db
    .insert(attempts)
    .values({
      userId: studentId,
      scenarioVersionId: fx.scenarioVersionId,
      assignmentId: fx.assignmentId,
      mode: 'assigned',
      seed: 5,
      status: 'submitted',
      submittedAt: s.submittedAt ?? new Date(),
      grade: s.grade,
      verified: true,
      timeToDiagnosisMs: s.timeToDiagnosisMs,
      diagnosis: { atMs: s.timeToDiagnosisMs, faultKind: s.given, verdicts: [], readings: [] },
      result,
    })
    .returning({ id: attempts.id });
  return row!.id;
}
