/**
 * `npm test`: everything a fresh machine needs (Chromium from Debian's packages
 * when it is missing), a throwaway PostgreSQL cluster, then `validate`.
 * Ends with a plain "N passed, N failed" line.
 */
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { userInfo } from 'node:os';
import { withTestCluster } from './test-cluster.ts';
import { printTally, validate } from './validate.ts';

function ensureChromium(): void {
  const path = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';
  if (existsSync(path)) return;
  if (userInfo().uid !== 0) {
    console.log(`Chromium is missing at ${path}; install Debian's "chromium" package to run the browser tests.`);
    return;
  }
  console.log('Installing Chromium from Debian\'s packages for the browser tests (once)…');
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  execFileSync('apt-get', ['update'], { stdio: 'inherit', env });
  execFileSync('apt-get', ['install', '-y', 'chromium'], { stdio: 'inherit', env });
}

ensureChromium();
const tally = await withTestCluster((env) => validate(env));
printTally(tally);
process.exit(tally.failed === 0 ? 0 : 1);
