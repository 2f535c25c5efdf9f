import { describe, expect, it } from 'vitest';
import type { LogEvent as InputEvent, RecordedReading } from '../../shared/api/attempts.ts';
import { createReadingsLog } from '../../src/features/bench/hooks/use-bench-session.ts';
import {
  backoffMs,
  createOutbox,
  mergeForResume,
  outboxKey,
  readPersisted,
  type OutboxStorage,
  type SequencedEvent,
  type Timer,
} from '../../src/features/bench/api/event-outbox.ts';

class MemoryStorage implements OutboxStorage {
  data = new Map<string, string>();
  getItem(k: string) {
    return this.data.get(k) ?? null;
  }
  setItem(k: string, v: string) {
    this.data.set(k, v);
  }
  removeItem(k: string) {
    this.data.delete(k);
  }
}

/** A timer the test advances by hand. */
class ManualTimer implements Timer {
  now = 0;
  private jobs: { at: number; fn: () => void; id: number }[] = [];
  private nextId = 1;
  set(fn: () => void, ms: number) {
    const id = this.nextId++;
    this.jobs.push({ at: this.now + ms, fn, id });
    return id;
  }
  clear(h: unknown) {
    this.jobs = this.jobs.filter((j) => j.id !== h);
  }
  nextDelay(): number | null {
    if (!this.jobs.length) return null;
    return Math.min(...this.jobs.map((j) => j.at)) - this.now;
  }
  async advance(ms: number) {
    const until = this.now + ms;
    for (;;) {
      const due = this.jobs.filter((j) => j.at <= until).sort((a, b) => a.at - b.at)[0];
      if (!due) break;
      this.jobs = this.jobs.filter((j) => j !== due);
      this.now = due.at;
      due.fn();
      await flushPromises();
    }
    this.now = until;
  }
}

const flushPromises = async () => {
  for (let i = 0; i < 10; i++) await Promise.resolve();
};

const pile = (atMs: number, dial01: number): InputEvent => ({ kind: 'pile', atMs, dial01 });

/** A server that stores each seq once and answers with the highest contiguous seq. */
function fakeServer() {
  const stored = new Map<number, InputEvent>();
  let online = true;
  let posts = 0;
  return {
    stored,
    posts: () => posts,
    setOnline(v: boolean) {
      online = v;
    },
    async send(batch: SequencedEvent[]) {
      posts += 1;
      if (!online) throw new Error('offline');
      for (const e of batch) if (!stored.has(e.seq)) stored.set(e.seq, e.event);
      let last = 0;
      while (stored.has(last + 1)) last += 1;
      return { lastSeq: last };
    },
  };
}

describe('the event outbox', () => {
  it('numbers events from after the server’s last seq and writes them to storage within 250 ms', async () => {
    const storage = new MemoryStorage();
    const server = fakeServer();
    const timer = new ManualTimer();
    const outbox = createOutbox({ attemptId: 7, storage, send: server.send, timer, serverSeq: 12 });
    expect(outbox.push(pile(10, 0.1)).seq).toBe(13);
    expect(outbox.push(pile(20, 0.2)).seq).toBe(14);
    await timer.advance(250);
    expect(readPersisted(storage, 7).pending.map((e) => e.seq)).toEqual([13, 14]);
    expect(outbox.view()).toMatchObject({ status: 'waiting', pending: 2 });
  });

  it('writes to storage at once when the page is hidden or unloads', () => {
    const storage = new MemoryStorage();
    const outbox = createOutbox({ attemptId: 2, storage, send: fakeServer().send, timer: new ManualTimer(), serverSeq: 0 });
    outbox.push(pile(0, 0.4));
    expect(readPersisted(storage, 2).pending).toEqual([]);
    outbox.persistNow();
    expect(readPersisted(storage, 2).pending.map((e) => e.seq)).toEqual([1]);
  });

  it('posts a batch every interval and reports all saved once acknowledged', async () => {
    const storage = new MemoryStorage();
    const server = fakeServer();
    const timer = new ManualTimer();
    const outbox = createOutbox({ attemptId: 1, storage, send: server.send, timer, serverSeq: 0, intervalMs: 1000 });
    outbox.start();
    outbox.push(pile(0, 0.1));
    outbox.push(pile(10, 0.2));
    expect(server.posts()).toBe(0);
    await timer.advance(1000);
    expect([...server.stored.keys()]).toEqual([1, 2]);
    expect(outbox.view()).toMatchObject({ status: 'saved', pending: 0, ackedSeq: 2 });
    expect(readPersisted(storage, 1).pending).toEqual([]);
  });

  it('sends at once when 50 events are waiting, without waiting for the interval', async () => {
    const server = fakeServer();
    const timer = new ManualTimer();
    const outbox = createOutbox({ attemptId: 1, storage: new MemoryStorage(), send: server.send, timer, serverSeq: 0, batchSize: 50 });
    outbox.start();
    for (let i = 0; i < 50; i++) outbox.push(pile(i * 10, i / 100));
    await flushPromises();
    expect(server.stored.size).toBe(50);
    expect(server.posts()).toBe(1);
  });

  it('keeps events through failures, backs off 1 s, 2 s, 4 s, and loses none when the network returns', async () => {
    const storage = new MemoryStorage();
    const server = fakeServer();
    const timer = new ManualTimer();
    const outbox = createOutbox({ attemptId: 3, storage, send: server.send, timer, serverSeq: 0, intervalMs: 1000 });
    outbox.start();
    server.setOnline(false);
    for (let i = 0; i < 5; i++) outbox.push(pile(i * 10, i / 10));
    await timer.advance(1000);
    expect(outbox.view()).toMatchObject({ status: 'offline', pending: 5, failures: 1 });
    expect(timer.nextDelay()).toBe(1000);
    await timer.advance(1000);
    expect(outbox.view().failures).toBe(2);
    expect(timer.nextDelay()).toBe(2000);
    await timer.advance(2000);
    expect(outbox.view().failures).toBe(3);
    expect(timer.nextDelay()).toBe(4000);
    outbox.push(pile(100, 0.9));
    outbox.persistNow();
    expect(readPersisted(storage, 3).pending).toHaveLength(6);
    server.setOnline(true);
    await timer.advance(4000);
    expect([...server.stored.keys()]).toEqual([1, 2, 3, 4, 5, 6]);
    expect(outbox.view()).toMatchObject({ status: 'saved', pending: 0, failures: 0 });
  });

  it('resends a batch whose answer was lost, and the server still stores each event once', async () => {
    const server = fakeServer();
    let dropAnswer = true;
    const send = async (batch: SequencedEvent[]) => {
      const res = await server.send(batch);
      if (dropAnswer) {
        dropAnswer = false;
        throw new Error('connection reset after the server stored the batch');
      }
      return res;
    };
    const timer = new ManualTimer();
    const outbox = createOutbox({ attemptId: 4, storage: new MemoryStorage(), send, timer, serverSeq: 0 });
    outbox.start();
    outbox.push(pile(0, 0.3));
    outbox.push(pile(10, 0.4));
    await timer.advance(1000);
    expect(outbox.view().pending).toBe(2);
    await timer.advance(1000);
    expect(server.posts()).toBe(2);
    expect(server.stored.size).toBe(2);
    expect(outbox.view()).toMatchObject({ status: 'saved', ackedSeq: 2 });
  });

  it('survives a reload: a new outbox on the same storage carries on with the unsent events and the next seq', async () => {
    const storage = new MemoryStorage();
    const server = fakeServer();
    server.setOnline(false);
    const first = createOutbox({ attemptId: 9, storage, send: server.send, timer: new ManualTimer(), serverSeq: 0 });
    first.push(pile(0, 0.1));
    first.push(pile(10, 0.2));
    first.noteSimTime(4321);
    // The page reloads: only storage is left.
    server.setOnline(true);
    const timer = new ManualTimer();
    const second = createOutbox({ attemptId: 9, storage, send: server.send, timer, serverSeq: 0 });
    expect(second.view().pending).toBe(2);
    expect(readPersisted(storage, 9).simTimeMs).toBe(4321);
    expect(second.push(pile(20, 0.3)).seq).toBe(3);
    second.start();
    await timer.advance(0);
    expect([...server.stored.keys()]).toEqual([1, 2, 3]);
  });

  it('drops events the server already holds when it reopens', () => {
    const storage = new MemoryStorage();
    storage.setItem(
      outboxKey(5),
      JSON.stringify({ pending: [{ seq: 1, event: pile(0, 0.1) }, { seq: 2, event: pile(5, 0.2) }, { seq: 3, event: pile(9, 0.3) }], ackedSeq: 0, simTimeMs: 9 }),
    );
    const outbox = createOutbox({ attemptId: 5, storage, send: fakeServer().send, timer: new ManualTimer(), serverSeq: 2 });
    expect(outbox.view()).toMatchObject({ pending: 1, ackedSeq: 2 });
    expect(outbox.push(pile(20, 0.5)).seq).toBe(4);
  });

  it('treats unreadable storage as an empty outbox', () => {
    const storage = new MemoryStorage();
    storage.setItem(outboxKey(6), '{not json');
    expect(readPersisted(storage, 6)).toEqual({ pending: [], ackedSeq: 0, simTimeMs: 0 });
  });

  it('clears its storage after a submission', () => {
    const storage = new MemoryStorage();
    const outbox = createOutbox({ attemptId: 8, storage, send: fakeServer().send, timer: new ManualTimer(), serverSeq: 0 });
    outbox.push(pile(0, 0.1));
    outbox.clear();
    expect(storage.getItem(outboxKey(8))).toBeNull();
    expect(outbox.view()).toMatchObject({ status: 'saved', pending: 0 });
  });
});

describe('backoff and resume helpers', () => {
  it('doubles the delay after each failure up to the cap', () => {
    expect([1, 2, 3, 4, 5, 6, 7].map((n) => backoffMs(n))).toEqual([1000, 2000, 4000, 8000, 16000, 30000, 30000]);
  });

  it('merges the server’s events with the local unsent ones in seq order, each once', () => {
    const server: SequencedEvent[] = [
      { seq: 1, event: pile(0, 0.1) },
      { seq: 2, event: pile(10, 0.2) },
    ];
    const local: SequencedEvent[] = [
      { seq: 4, event: pile(30, 0.4) },
      { seq: 2, event: pile(10, 0.2) },
      { seq: 3, event: pile(20, 0.3) },
    ];
    const { events, unsent } = mergeForResume(server, local);
    expect(events.map((e) => e.seq)).toEqual([1, 2, 3, 4]);
    expect(unsent.map((e) => e.seq)).toEqual([3, 4]);
  });
});

describe('the readings of the log', () => {
  const reading = (id: string, atMs: number): RecordedReading => ({ id, test: 'battery-ocv', quantity: 'voltage', value: 12.61, unit: 'V', atMs, where: 'posts' });

  it('logs each reading through the outbox and shows it saved only once the server has stored it', async () => {
    const server = fakeServer();
    const timer = new ManualTimer();
    const outbox = createOutbox({ attemptId: 3, storage: new MemoryStorage(), send: server.send, timer, serverSeq: 0, intervalMs: 1000 });
    outbox.start();
    let now = 5000;
    const log = createReadingsLog([], outbox, () => now);
    log.record(reading('a', 4900));
    expect(log.list()).toMatchObject([{ reading: { id: 'a' }, seq: 1, stored: false }]);
    await timer.advance(1000);
    expect(log.list()).toMatchObject([{ seq: 1, stored: true }]);
    expect(server.stored.get(1)).toEqual({ kind: 'reading', atMs: 5000, reading: reading('a', 4900) });
    now = 7000;
    log.remove('a');
    expect(log.list()).toEqual([]);
    await timer.advance(1000);
    expect(server.stored.get(2)).toEqual({ kind: 'reading-remove', atMs: 7000, readingId: 'a' });
  });

  it('keeps the same list while the outbox sends other events, and a new one when a reading is taken or stored', async () => {
    const server = fakeServer();
    const timer = new ManualTimer();
    const outbox = createOutbox({ attemptId: 5, storage: new MemoryStorage(), send: server.send, timer, serverSeq: 0, intervalMs: 1000 });
    outbox.start();
    const log = createReadingsLog([], outbox, () => 1000);
    let notified = 0;
    log.subscribe(() => notified++);
    log.record(reading('a', 900));
    const first = log.list();
    // A turn of the pile's dial: the outbox changes (and tells its listeners), the readings do not.
    outbox.push({ kind: 'pile', atMs: 1100, dial01: 0.3 });
    outbox.push({ kind: 'pile', atMs: 1200, dial01: 0.4 });
    expect(log.list()).toBe(first);
    // Stored by the server: the reading's flag changes, so the list is new.
    await timer.advance(1000);
    const stored = log.list();
    expect(stored).not.toBe(first);
    expect(stored).toMatchObject([{ reading: { id: 'a' }, stored: true }]);
    outbox.push({ kind: 'pile', atMs: 2100, dial01: 0 });
    await timer.advance(1000);
    expect(log.list()).toBe(stored);
    expect(notified).toBeGreaterThan(0);
  });

  it('takes the readings of a log from another device (the bootstrap’s events)', () => {
    const outbox = createOutbox({ attemptId: 4, storage: new MemoryStorage(), send: fakeServer().send, timer: new ManualTimer(), serverSeq: 3 });
    const log = createReadingsLog(
      [
        { seq: 1, event: { kind: 'reading', atMs: 100, reading: reading('a', 100) } },
        { seq: 2, event: { kind: 'reading', atMs: 200, reading: reading('b', 200) } },
        { seq: 3, event: { kind: 'reading-remove', atMs: 300, readingId: 'a' } },
      ],
      outbox,
      () => 400,
    );
    expect(log.list()).toMatchObject([{ reading: { id: 'b' }, seq: 2, stored: true }]);
  });
});
