/**
 * Driving LTI launches without a browser: a client that keeps cookies and
 * follows redirects one by one, Loadline listening on a port (the local
 * platform fetches its key set), and the local platform registered through
 * the admin API.
 */
import { expect } from 'vitest';
import { startLocalPlatform, type LaunchOptions, type LocalPlatform } from '../../server/lti/local-platform.ts';
import { demoFirst } from '../../server/db/demo-people.ts';
import { listen } from './live-fixtures.ts';
import { signIn, startTestApp, type TestApp } from './support.ts';

/** A cookie-keeping client that follows redirects itself, as a browser does, and remembers each hop. */
export class FormClient {
  readonly cookies = new Map<string, string>();
  hops: string[] = [];

  private cookieHeader(): string {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
  }

  async send(url: string, init: { method?: string; form?: Record<string, string>; headers?: Record<string, string> } = {}): Promise<Response> {
    // As a browser navigates: it asks for a page.
    const headers: Record<string, string> = { Accept: 'text/html,application/xhtml+xml,*/*;q=0.8', ...init.headers };
    if (this.cookies.size) headers.Cookie = this.cookieHeader();
    let body: string | undefined;
    if (init.form) {
      headers['Content-Type'] = 'application/x-www-form-urlencoded';
      body = new URLSearchParams(init.form).toString();
    }
    const res = await fetch(url, { method: init.method ?? (init.form ? 'POST' : 'GET'), headers, body, redirect: 'manual' });
    for (const line of res.headers.getSetCookie()) {
      const [pair] = line.split(';');
      const eq = pair!.indexOf('=');
      const name = pair!.slice(0, eq).trim();
      const value = pair!.slice(eq + 1).trim();
      if (/max-age=0|expires=Thu, 01 Jan 1970/i.test(line)) this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
    return res;
  }

  /** Sends, then follows redirects (a 303 or 302 turns into a GET); returns the last answer and its address. */
  async follow(url: string, init: { method?: string; form?: Record<string, string>; headers?: Record<string, string> } = {}, stopAt?: (url: URL) => boolean): Promise<{ res: Response; url: string }> {
    this.hops = [url];
    let res = await this.send(url, init);
    let at = url;
    for (let i = 0; i < 12 && res.status >= 300 && res.status < 400; i++) {
      const next = new URL(res.headers.get('location')!, at);
      at = next.toString();
      this.hops.push(at);
      if (stopAt?.(next)) return { res, url: at };
      res = await this.send(at, { headers: init.headers });
    }
    return { res, url: at };
  }
}

/** The auto-posted form of the platform's authorisation answer. */
export function launchForm(page: string): { action: string; idToken: string; state: string } {
  const action = /<form[^>]*action="([^"]+)"/.exec(page)?.[1];
  const idToken = /name="id_token" value="([^"]+)"/.exec(page)?.[1];
  const state = /name="state" value="([^"]+)"/.exec(page)?.[1];
  if (!action || !idToken || !state) throw new Error(`no launch form in: ${page.slice(0, 300)}`);
  const unescape = (s: string) => s.replace(/&amp;/g, '&').replace(/&quot;/g, '"').replace(/&#39;/g, "'").replace(/&lt;/g, '<').replace(/&gt;/g, '>');
  return { action: unescape(action), idToken, state };
}

export interface LtiHarness {
  t: TestApp;
  tool: { url: string; close(): Promise<void> };
  platform: LocalPlatform;
  platformId: number;
  logs: { level: string; message: string; extra: unknown }[];
  close(): Promise<void>;
}

/** Loadline (listening) and the local platform, registered by the demo admin through the admin API. */
export async function startLtiHarness(opts: { pageSize?: number } = {}): Promise<LtiHarness> {
  const t = await startTestApp();
  const tool = await listen(t);
  // Loadline's public address is where it listens (a port the system picked): launches name it as their target.
  t.ctx.env = { ...t.ctx.env, PUBLIC_URL: tool.url };
  const platform = await startLocalPlatform({ toolUrl: tool.url, pageSize: opts.pageSize });
  const logs: LtiHarness['logs'] = [];
  t.ctx.log = (level, message, extra) => void logs.push({ level, message, extra });
  const admin = await signIn(t.app, demoFirst('admin').email);
  const made = await admin.post('/api/lti/platforms').send(platform.registration());
  expect(made.status, JSON.stringify(made.body)).toBe(201);
  return {
    t,
    tool,
    platform,
    platformId: made.body.platform.id as number,
    logs,
    async close() {
      await platform.close();
      await tool.close();
      await t.close();
    },
  };
}

/** The login initiation as the platform would send it; returns the state and nonce Loadline put in its redirect. */
export async function startLogin(h: LtiHarness, client: FormClient, o: LaunchOptions = { user: 'qm-learner-wren' }): Promise<{ state: string; nonce: string; location: URL }> {
  const q = new URLSearchParams({
    iss: h.platform.issuer,
    login_hint: o.user,
    target_link_uri: `${h.tool.url}/lti/${o.deepLink ? 'deep-linking' : 'launch'}`,
    client_id: h.platform.clientId,
    lti_deployment_id: h.platform.deploymentId,
  });
  const res = await client.send(`${h.tool.url}/lti/login?${q}`);
  expect(res.status).toBe(302);
  const location = new URL(res.headers.get('location')!);
  return { state: location.searchParams.get('state')!, nonce: location.searchParams.get('nonce')!, location };
}

/** A whole launch as a browser makes it: the platform's start, the login, the authorisation, the form post and the handoff. */
export async function launch(h: LtiHarness, o: LaunchOptions, client = new FormClient()): Promise<{ client: FormClient; landed: string; res: Response }> {
  const auth = await client.follow(h.platform.launchUrl(o));
  expect(auth.res.status, await auth.res.clone().text()).toBe(200);
  const form = launchForm(await auth.res.text());
  const done = await client.follow(form.action, { form: { id_token: form.idToken, state: form.state } }, (u) => u.origin === h.tool.url && !u.pathname.startsWith('/lti/'));
  const landed = new URL(done.url);
  return { client, landed: landed.pathname + landed.search, res: done.res };
}

/** The session's user as the API sees it, with the client's cookie. */
export async function whoIs(h: LtiHarness, client: FormClient): Promise<{ id: number; role: string; name: string; email: string } | null> {
  const res = await client.send(`${h.tool.url}/api/auth/me`);
  return ((await res.json()) as { user: { id: number; role: string; name: string; email: string } | null }).user;
}
