/**
 * `npm run lti-platform` (or `npm run dev -- --lti-platform`): Quillmoor, the
 * local LTI 1.3 platform, for trying launches, deep linking, grades and
 * rosters by hand. It registers itself with the running Loadline through the
 * admin API, signed in as the demo admin, and prints its course page.
 * Development only: it refuses to start when NODE_ENV is production.
 *
 * LOADLINE_URL is Loadline's address as the browser sees it (default the Vite
 * dev server, http://localhost:5173, which passes /api and /lti on to the
 * API); LTI_PLATFORM_PORT is the platform's port (default 5190).
 */
import { DEMO_PASSWORD, DEMO_PEOPLE } from '../server/db/demo-people.ts';
import { startLocalPlatform } from '../server/lti/local-platform.ts';

const toolUrl = (process.env.LOADLINE_URL ?? 'http://localhost:5173').replace(/\/+$/, '');
const port = Number(process.env.LTI_PLATFORM_PORT ?? 5190);

/** A tiny cookie-keeping client of Loadline's API. */
async function adminApi(): Promise<(method: string, path: string, body?: unknown) => Promise<{ status: number; body: Record<string, unknown> }>> {
  let cookie = '';
  let csrf = '';
  const call = async (method: string, path: string, body?: unknown) => {
    const headers: Record<string, string> = { Accept: 'application/json' };
    if (cookie) headers.Cookie = cookie;
    if (csrf && method !== 'GET') headers['X-CSRF-Token'] = csrf;
    if (body !== undefined) headers['Content-Type'] = 'application/json';
    const res = await fetch(`${toolUrl}${path}`, { method, headers, body: body === undefined ? undefined : JSON.stringify(body) });
    const set = res.headers.getSetCookie().map((c) => c.split(';')[0]).find((c) => c?.startsWith('loadline.sid='));
    if (set) cookie = set;
    const text = await res.text();
    const parsed = text ? (JSON.parse(text) as Record<string, unknown>) : {};
    if (typeof parsed.csrfToken === 'string') csrf = parsed.csrfToken;
    return { status: res.status, body: parsed };
  };
  await call('GET', '/api/auth/me');
  const admin = DEMO_PEOPLE.find((p) => p.role === 'admin')!;
  const signedIn = await call('POST', '/api/auth/sign-in', { email: admin.email, password: DEMO_PASSWORD });
  if (signedIn.status !== 200) throw new Error(`signing in as the demo admin failed (${signedIn.status}): is this the demo database?`);
  return call;
}

async function waitForLoadline(): Promise<void> {
  for (let i = 0; ; i++) {
    try {
      const res = await fetch(`${toolUrl}/api/auth/me`);
      if (res.ok) return;
    } catch {
      // Not up yet.
    }
    if (i === 120) throw new Error(`Loadline does not answer at ${toolUrl}`);
    await new Promise((r) => setTimeout(r, 1000));
  }
}

const platform = await startLocalPlatform({ toolUrl, port, clientId: 'loadline-dev', host: '127.0.0.1' });
await waitForLoadline();
const api = await adminApi();
const registration = platform.registration();
const made = await api('POST', '/api/lti/platforms', registration);
if (made.status === 409) {
  const list = await api('GET', '/api/lti/platforms');
  const known = (list.body.platforms as { id: number; issuer: string; clientId: string }[]).find((p) => p.issuer === registration.issuer && p.clientId === registration.clientId);
  if (known) await api('PUT', `/api/lti/platforms/${known.id}`, registration);
} else if (made.status !== 201) {
  throw new Error(`registering the platform failed (${made.status}): ${JSON.stringify(made.body)}`);
}
console.log(`\n${platform.name}, the local LTI platform, is registered with Loadline at ${toolUrl}.`);
console.log(`Its course page (launch as a learner or an instructor, add an activity, see the gradebook): ${platform.url}/\n`);

const stop = () => void platform.close().finally(() => process.exit(0));
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
