/**
 * A PostgreSQL cluster on loopback, from Debian's packages, for `npm start`
 * (kept between runs) and `npm test` (thrown away afterwards).
 *
 * initdb and postgres refuse to run as root, so as root every server command
 * runs through `runuser -u postgres`, on a data folder that user can reach.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { chmodSync, chownSync, existsSync, mkdirSync, readdirSync, rmSync, statSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { userInfo } from 'node:os';

export interface ClusterOptions {
  /** Preferred data folder; replaced by one under the temp folder when the server user cannot reach it. */
  dataDir: string;
  port: number;
  /** Short path for the Unix socket (sockets have a length limit). */
  socketDir: string;
  /** Throwaway clusters skip fsync. */
  throwaway?: boolean;
  log?: (line: string) => void;
}

export interface Cluster {
  dataDir: string;
  port: number;
  /** A connection string for one of its databases, through the cluster's Unix socket. */
  url(database: string): string;
  stop(): void;
}

const isRoot = userInfo().uid === 0;
const SERVER_USER = 'postgres';

function findBinDir(): string | null {
  const base = '/usr/lib/postgresql';
  if (!existsSync(base)) return null;
  const versions = readdirSync(base)
    .filter((v) => existsSync(join(base, v, 'bin', 'initdb')))
    .sort((a, b) => Number(b) - Number(a));
  return versions[0] ? join(base, versions[0], 'bin') : null;
}

function ensureBinaries(log: (l: string) => void): string {
  let bin = findBinDir();
  if (bin) return bin;
  if (!isRoot) {
    throw new Error('PostgreSQL server binaries are missing. Install the "postgresql" package (as root: apt-get install -y postgresql).');
  }
  log('PostgreSQL binaries not found: installing Debian\'s postgresql package (this happens once)…');
  execFileSync('apt-get', ['update'], { stdio: 'inherit' });
  execFileSync('apt-get', ['install', '-y', 'postgresql'], { stdio: 'inherit', env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' } });
  bin = findBinDir();
  if (!bin) throw new Error('PostgreSQL was installed but its binaries were not found under /usr/lib/postgresql.');
  return bin;
}

function serverUserIds(): { uid: number; gid: number } {
  const uid = Number(execFileSync('id', ['-u', SERVER_USER]).toString().trim());
  const gid = Number(execFileSync('id', ['-g', SERVER_USER]).toString().trim());
  return { uid, gid };
}

/** Can the server user traverse every folder above `dir`? */
function reachableByServerUser(dir: string): boolean {
  if (!isRoot) return true;
  const probe = spawnSync('runuser', ['-u', SERVER_USER, '--', 'test', '-x', dirname(resolve(dir))], { cwd: '/' });
  return probe.status === 0;
}

function run(bin: string, cmd: string, args: string[]): void {
  const full = join(bin, cmd);
  const argv = isRoot ? ['-u', SERVER_USER, '--', full, ...args] : args;
  const exe = isRoot ? 'runuser' : full;
  const res = spawnSync(exe, argv, { cwd: '/', encoding: 'utf8' });
  if (res.status !== 0) {
    const out = `${res.stdout ?? ''}${res.stderr ?? ''}`.trim();
    throw new Error(`${cmd} failed (exit ${res.status}): ${out}`);
  }
}

function prepareFolder(dir: string): void {
  mkdirSync(dir, { recursive: true });
  if (isRoot) {
    const { uid, gid } = serverUserIds();
    chownSync(dir, uid, gid);
  }
  chmodSync(dir, 0o700);
}

export function startCluster(options: ClusterOptions): Cluster {
  const log = options.log ?? ((l: string) => console.log(l));
  const bin = ensureBinaries(log);

  let dataDir = resolve(options.dataDir);
  mkdirSync(dirname(dataDir), { recursive: true, mode: 0o755 });
  if (!reachableByServerUser(dataDir)) {
    const fallback = join('/tmp', `loadline-pg-${options.port}`);
    log(`The database user cannot reach ${dataDir}; using ${fallback} instead.`);
    dataDir = fallback;
  }
  mkdirSync(dirname(dataDir), { recursive: true });
  mkdirSync(options.socketDir, { recursive: true });
  chmodSync(options.socketDir, 0o1777);

  const initialised = existsSync(join(dataDir, 'PG_VERSION'));
  if (!initialised) {
    prepareFolder(dataDir);
    log(`Initialising a PostgreSQL cluster in ${dataDir}…`);
    run(bin, 'initdb', ['-D', dataDir, '-U', 'loadline', '--auth=trust', '--encoding=UTF8', '--locale=C.UTF-8']);
  } else if (isRoot) {
    const { uid } = serverUserIds();
    if (statSync(dataDir).uid !== uid) prepareFolder(dataDir);
  }

  const settings = [
    `listen_addresses='127.0.0.1'`,
    `port=${options.port}`,
    `unix_socket_directories='${options.socketDir}'`,
    `max_connections=200`,
    // Short queries only: JIT compiling them costs more than it saves.
    'jit=off',
    ...(options.throwaway ? ['fsync=off', 'synchronous_commit=off', 'full_page_writes=off'] : []),
  ];
  const logFile = join(dataDir, 'server.log');
  // A stale postmaster.pid from a killed run would block the start: pg_ctl handles it when the PID is gone.
  run(bin, 'pg_ctl', ['-D', dataDir, '-l', logFile, '-w', '-t', '60', '-o', settings.map((s) => `-c ${s}`).join(' '), 'start']);

  let stopped = false;
  return {
    dataDir,
    port: options.port,
    // The server connects through the Unix socket: on one machine it carries each query with less work for the kernel (and
    // so for the cores the server and PostgreSQL share) than TCP on loopback, which stays open for other clients.
    url: (database: string) => `postgres://loadline@${encodeURIComponent(options.socketDir)}:${options.port}/${database}`,
    stop() {
      if (stopped) return;
      stopped = true;
      try {
        run(bin, 'pg_ctl', ['-D', dataDir, '-m', 'fast', '-w', '-t', '60', 'stop']);
      } catch (err) {
        log(`Stopping PostgreSQL: ${(err as Error).message}`);
      }
      if (options.throwaway) rmSync(dataDir, { recursive: true, force: true });
    },
  };
}

/** Create the database when it does not exist yet. */
export async function ensureDatabase(cluster: Cluster, database: string): Promise<void> {
  const { default: pg } = await import('pg');
  const client = new pg.Client({ connectionString: cluster.url('postgres') });
  await client.connect();
  try {
    const found = await client.query('select 1 from pg_database where datname = $1', [database]);
    if (found.rowCount === 0) await client.query(`create database "${database.replace(/"/g, '')}"`);
  } finally {
    await client.end();
  }
}
