/**
 * Fan-out between server processes through PostgreSQL LISTEN/NOTIFY. Each
 * process keeps one dedicated client that LISTENs on the channels someone in
 * this process subscribes to; it connects with the first subscriber, closes a
 * little after the last one leaves, and reconnects with backoff when the
 * connection drops. Payloads are small (ids): receivers read the details from
 * the database. After a reconnect, subscribers are told, so they can re-read
 * whatever they might have missed while the connection was down.
 *
 * The database itself sends the notifications (triggers in the migrations
 * `live-notify` and `session-notify`): a stored attempt event, a new or
 * changed attempt, a new or applied injection, an ended or rewritten session
 * and a changed account; the statement that stores a bench's clock sends its
 * own (server/attempts/bench-clock.ts).
 */
import pg from 'pg';

/** attempt id: events were stored, or the attempt started or changed status. */
export const ATTEMPT_CHANNEL = 'loadline_attempt';
/** "attempt id:injection id": an injection was made, cleared or applied. */
export const INJECTION_CHANNEL = 'loadline_injection';
/** attempt id: the open bench reported its clock (only the class boards listen). */
export const BENCH_CLOCK_CHANNEL = 'loadline_bench_clock';
/** sid: a session ended before its expiry, or was rewritten (the session cache of server/accounts/session.ts). */
export const SESSION_CHANNEL = 'loadline_session';
/** user id: an account changed or was removed. */
export const USER_CHANNEL = 'loadline_user';
export type LiveChannel = typeof ATTEMPT_CHANNEL | typeof INJECTION_CHANNEL | typeof BENCH_CLOCK_CHANNEL | typeof SESSION_CHANNEL | typeof USER_CHANNEL;
/** What the live board and the benches' injection streams hear. */
export const LIVE_CHANNELS: readonly LiveChannel[] = [ATTEMPT_CHANNEL, INJECTION_CHANNEL, BENCH_CLOCK_CHANNEL];
/** What the session cache hears: kept apart, so an always-open cache does not take every stored batch's notification too. */
export const SESSION_CHANNELS: readonly LiveChannel[] = [SESSION_CHANNEL, USER_CHANNEL];

type Listener = (payload: string) => void;
type Log = (level: 'info' | 'warn' | 'error', message: string, extra?: unknown) => void;
/** What a bus is made from: the app's database and log (a part of the app's context). */
export interface BusHost {
  env: { DATABASE_URL: string };
  pool: pg.Pool;
  log: Log;
}

export interface LiveBus {
  /** Starts listening if needed; resolves once the LISTEN is in place (or the first attempt failed and a retry is scheduled). */
  subscribe(channel: LiveChannel, listener: Listener): Promise<() => void>;
  /** Called after the dedicated connection came back from a drop. */
  onReconnect(listener: () => void): () => void;
  notify(channel: LiveChannel, payload: string): Promise<void>;
  /** Whether the dedicated client is connected and listening. */
  connected(): boolean;
  close(): Promise<void>;
}

const LINGER_MS = 5_000;
const MAX_BACKOFF_MS = 5_000;

export function createLiveBus(opts: { databaseUrl: string; pool: pg.Pool; log: Log; channels?: readonly LiveChannel[] }): LiveBus {
  const channels = opts.channels ?? LIVE_CHANNELS;
  const listeners = new Map<LiveChannel, Set<Listener>>(channels.map((c) => [c, new Set<Listener>()]));
  const reconnectListeners = new Set<() => void>();
  let client: pg.Client | null = null;
  let connecting: Promise<void> | null = null;
  let isConnected = false;
  let everConnected = false;
  let backoffMs = 250;
  let retryTimer: NodeJS.Timeout | null = null;
  let lingerTimer: NodeJS.Timeout | null = null;
  let closed = false;

  const subscriberCount = () => [...listeners.values()].reduce((n, s) => n + s.size, 0);

  function dispatch(channel: string, payload: string): void {
    const set = listeners.get(channel as LiveChannel);
    if (!set) return;
    for (const l of [...set]) {
      try {
        l(payload);
      } catch (err) {
        opts.log('warn', 'live listener failed', err);
      }
    }
  }

  function scheduleRetry(): void {
    if (closed || retryTimer || subscriberCount() === 0) return;
    retryTimer = setTimeout(() => {
      retryTimer = null;
      void ensureConnected();
    }, backoffMs);
    retryTimer.unref();
    backoffMs = Math.min(MAX_BACKOFF_MS, backoffMs * 2);
  }

  function drop(c: pg.Client): void {
    if (client !== c) return;
    client = null;
    isConnected = false;
    c.removeAllListeners('notification');
    void c.end().catch(() => undefined);
    scheduleRetry();
  }

  async function connectOnce(): Promise<void> {
    const c = new pg.Client({ connectionString: opts.databaseUrl, connectionTimeoutMillis: 2_000, keepAlive: true });
    c.on('error', (err) => {
      opts.log('warn', 'live notification connection lost', err);
      drop(c);
    });
    c.on('end', () => drop(c));
    c.on('notification', (msg) => dispatch(msg.channel, msg.payload ?? ''));
    client = c;
    try {
      await c.connect();
      for (const ch of channels) await c.query(`LISTEN ${ch}`);
    } catch (err) {
      opts.log('warn', 'live notification connection failed', err);
      drop(c);
      return;
    }
    if (client !== c) return;
    isConnected = true;
    backoffMs = 250;
    const wasReconnect = everConnected;
    everConnected = true;
    if (wasReconnect) {
      for (const l of [...reconnectListeners]) {
        try {
          l();
        } catch (err) {
          opts.log('warn', 'live reconnect listener failed', err);
        }
      }
    }
  }

  function ensureConnected(): Promise<void> {
    if (closed || isConnected) return Promise.resolve();
    if (!connecting) {
      connecting = connectOnce().finally(() => {
        connecting = null;
      });
    }
    return connecting;
  }

  function maybeLinger(): void {
    if (subscriberCount() > 0 || lingerTimer) return;
    lingerTimer = setTimeout(() => {
      lingerTimer = null;
      if (subscriberCount() > 0) return;
      const c = client;
      client = null;
      isConnected = false;
      everConnected = false;
      if (retryTimer) clearTimeout(retryTimer);
      retryTimer = null;
      if (c) {
        c.removeAllListeners();
        c.on('error', () => undefined);
        void c.end().catch(() => undefined);
      }
    }, LINGER_MS);
    lingerTimer.unref();
  }

  return {
    async subscribe(channel, listener) {
      if (closed) throw new Error('the live bus is closed');
      if (lingerTimer) {
        clearTimeout(lingerTimer);
        lingerTimer = null;
      }
      listeners.get(channel)!.add(listener);
      await ensureConnected();
      return () => {
        listeners.get(channel)!.delete(listener);
        maybeLinger();
      };
    },
    onReconnect(listener) {
      reconnectListeners.add(listener);
      return () => reconnectListeners.delete(listener);
    },
    async notify(channel, payload) {
      await opts.pool.query('select pg_notify($1, $2)', [channel, payload]);
    },
    connected: () => isConnected,
    async close() {
      closed = true;
      if (retryTimer) clearTimeout(retryTimer);
      if (lingerTimer) clearTimeout(lingerTimer);
      const c = client;
      client = null;
      isConnected = false;
      if (c) {
        c.removeAllListeners();
        c.on('error', () => undefined);
        await c.end().catch(() => undefined);
      }
    },
  };
}

const buses = new WeakMap<pg.Pool, LiveBus>();
const sessionBuses = new WeakMap<pg.Pool, LiveBus>();

function busOf(store: WeakMap<pg.Pool, LiveBus>, ctx: BusHost, channels: readonly LiveChannel[]): LiveBus {
  let bus = store.get(ctx.pool);
  if (!bus) {
    bus = createLiveBus({ databaseUrl: ctx.env.DATABASE_URL, pool: ctx.pool, log: ctx.log, channels });
    store.set(ctx.pool, bus);
  }
  return bus;
}

/**
 * The process's bus for this app's live board and injection streams (one per
 * database pool, made on first use). It holds a connection only while
 * someone subscribes.
 */
export function liveBusFor(ctx: BusHost): LiveBus {
  return busOf(buses, ctx, LIVE_CHANNELS);
}

/** The bus of this app's session cache, on a connection of its own that stays open while the app runs (closeLiveBus). */
export function sessionBusFor(ctx: BusHost): LiveBus {
  return busOf(sessionBuses, ctx, SESSION_CHANNELS);
}

/** Closes the buses of this pool, if any were made; the app's database close calls it. */
export async function closeLiveBus(pool: pg.Pool): Promise<void> {
  const made = [buses.get(pool), sessionBuses.get(pool)];
  buses.delete(pool);
  sessionBuses.delete(pool);
  await Promise.all(made.map((bus) => bus?.close()));
}
