/**
 * The session secret `npm start` runs with: made at random on the first run
 * and kept in a file beside the database cluster's data folder, readable by
 * its owner only, so sessions survive a restart and each installation has a
 * secret of its own. It goes wherever the cluster goes (the git-ignored
 * .data/ folder, or the temporary folder pg-cluster.ts falls back to), and
 * with it: a cluster made afresh gets a fresh secret.
 */
import { randomBytes } from 'node:crypto';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { PRODUCTION_SECRET_MIN } from '../server/env.ts';

export function secretFileFor(dataDir: string): string {
  return `${dataDir.replace(/\/+$/, '')}.session-secret`;
}

export function serverSecret(dataDir: string, log: (line: string) => void = console.log): string {
  const file = secretFileFor(dataDir);
  if (existsSync(file)) {
    const kept = readFileSync(file, 'utf8').trim();
    if (kept.length >= PRODUCTION_SECRET_MIN) return kept;
    throw new Error(`${file} holds no usable session secret (at least ${PRODUCTION_SECRET_MIN} characters); delete it to have a new one made`);
  }
  const secret = randomBytes(32).toString('hex');
  // 'wx': never overwrite one made meanwhile; 0600: the owner's alone.
  writeFileSync(file, `${secret}\n`, { mode: 0o600, flag: 'wx' });
  log(`Made a session secret for this installation (${file}).`);
  return secret;
}
