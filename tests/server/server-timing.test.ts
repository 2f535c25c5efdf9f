/**
 * The Server-Timing header (W3C Server Timing, https://www.w3.org/TR/server-timing/):
 * `name;dur=ms` entries separated by commas, as the submission's answer carries.
 */
import express from 'express';
import supertest from 'supertest';
import { describe, expect, it } from 'vitest';
import { markReceived, parseServerTiming, ServerTiming } from '../../server/http/server-timing.ts';

describe('Server-Timing', () => {
  it('writes each part once, in the order first timed, with the total last', async () => {
    const timing = new ServerTiming(performance.now() - 50);
    timing.add('read', 2.04);
    const t0 = performance.now();
    await new Promise((r) => setTimeout(r, 20));
    timing.add('grade', performance.now() - t0);
    timing.add('read', 1); // a retry reads again: counted in the same part
    const header = timing.header();
    expect(header).toMatch(/^read;dur=3\.0, grade;dur=\d+\.\d, total;dur=\d+\.\d$/);
    const parsed = parseServerTiming(header);
    expect(parsed.read).toBe(3);
    // setTimeout may fire a little early or late; the total counts from the given start, 50 ms before.
    expect(parsed.grade).toBeGreaterThanOrEqual(15);
    expect(parsed.total).toBeGreaterThanOrEqual(50 + parsed.grade!);
  });

  it('reads headers as the specification writes them: descriptions and spaces allowed, entries without a duration left out', () => {
    expect(parseServerTiming('db;dur=53.2, app;desc="Application";dur=47.2 , cache;desc="Cache hit", miss')).toEqual({ db: 53.2, app: 47.2 });
    expect(parseServerTiming(undefined)).toEqual({});
  });

  it('gives every answer its total, and leaves a route’s own header alone', async () => {
    const app = express();
    app.use(markReceived);
    app.get('/plain', (_req, res) => {
      setTimeout(() => res.json({ ok: true }), 30);
    });
    app.get('/own', (_req, res) => {
      res.setHeader('Server-Timing', 'grade;dur=4.0, total;dur=5.0');
      res.json({ ok: true });
    });
    app.get('/head', (_req, res) => {
      res.writeHead(204, { 'X-Kept': 'yes' }).end();
    });
    const plain = await supertest(app).get('/plain').expect(200);
    const total = parseServerTiming(plain.headers['server-timing']).total!;
    // From the first middleware to the answer's head: at least the route's own 30 ms.
    expect(total).toBeGreaterThanOrEqual(25);
    expect(total).toBeLessThan(5_000);
    const own = await supertest(app).get('/own').expect(200);
    expect(own.headers['server-timing']).toBe('grade;dur=4.0, total;dur=5.0');
    const head = await supertest(app).get('/head').expect(204);
    expect(head.headers['x-kept']).toBe('yes');
    expect(parseServerTiming(head.headers['server-timing']).total).toBeGreaterThanOrEqual(0);
  });
});
