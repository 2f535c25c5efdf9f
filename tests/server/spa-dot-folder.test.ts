/**
 * A checkout under a folder whose name starts with a dot (~/.projects/…,
 * a tool's hidden work folder) is served like any other: the real server
 * process, with its built client in such a folder, answers every page with
 * the app and every file with itself. Express's file sender refuses a
 * dot-folder anywhere in an absolute path it is given, so the app's fallback
 * names index.html relative to its folder (`root`), where only the name's
 * own parts are checked. Dot-files asked for by name stay refused.
 * (Express 5 `res.sendFile` and the `send` module's `dotfiles` option, from
 * memory.)
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnServer, type ServerProcess } from './live-fixtures.ts';
import { startTestApp, type TestApp } from './support.ts';

const MARK = '<title>Loadline test page served from a dot-folder</title>';

let t: TestApp;
let dir: string;
let server: ServerProcess;

beforeAll(async () => {
  t = await startTestApp();
  dir = mkdtempSync(join(tmpdir(), 'loadline-spa-'));
  const dist = join(dir, '.school-laptop', 'projects', 'loadline', 'dist');
  mkdirSync(join(dist, 'assets'), { recursive: true });
  writeFileSync(join(dist, 'index.html'), `<!doctype html><html><head>${MARK}<script type="module" src="/assets/app.js"></script></head><body><div id="root"></div></body></html>\n`);
  writeFileSync(join(dist, 'assets', 'app.js'), 'export const served = true;\n');
  writeFileSync(join(dist, '.env'), 'NOT_FOR_THE_WEB=1\n');
  server = await spawnServer(t.databaseUrl, { LOADLINE_STATIC_DIR: dist });
});
afterAll(async () => {
  await server?.stop();
  await t?.close();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

describe('a checkout under a dot-folder', () => {
  it('serves the app for every page of the client', async () => {
    for (const page of ['/', '/sign-in', '/instructor/classes/12', '/bench/new?scenarioId=3']) {
      const res = await fetch(`${server.url}${page}`);
      expect(res.status, page).toBe(200);
      expect(res.headers.get('content-type'), page).toMatch(/^text\/html/);
      expect(await res.text(), page).toContain(MARK);
    }
  });

  it('serves the client’s files, and the API as JSON', async () => {
    const asset = await fetch(`${server.url}/assets/app.js`);
    expect(asset.status).toBe(200);
    expect(await asset.text()).toContain('served = true');
    const me = await fetch(`${server.url}/api/auth/me`);
    expect(me.status).toBe(200);
    expect((await me.json()) as { user: unknown }).toMatchObject({ user: null });
    const missing = await fetch(`${server.url}/api/no-such-route`);
    expect(missing.status).toBe(404);
    expect(missing.headers.get('content-type')).toMatch(/json/);
  });

  it('still keeps dot-files inside the client folder, and anything outside it, from the web', async () => {
    const env = await fetch(`${server.url}/.env`);
    expect(await env.text()).not.toContain('NOT_FOR_THE_WEB');
    for (const path of ['/..%2f..%2f..%2fpackage.json', '/assets/..%2f..%2f.env']) {
      const res = await fetch(`${server.url}${path}`);
      const text = await res.text();
      expect(text, path).not.toContain('NOT_FOR_THE_WEB');
      expect(text, path).not.toContain('"devDependencies"');
    }
  });
});
