/**
 * `npm run validate`: typecheck, lint, unit, integration, resilience and browser tests, in
 * that order, counting what passed and failed. `npm test` runs this inside its
 * own throwaway PostgreSQL cluster; run alone, it makes one too.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('..', import.meta.url));
const bin = (name: string) => join(root, 'node_modules', '.bin', name);
const reports = join(root, 'test-results');

export interface Tally {
  passed: number;
  failed: number;
  lines: string[];
}

function runStep(tally: Tally, label: string, cmd: string, args: string[], env: NodeJS.ProcessEnv): boolean {
  console.log(`\n── ${label} ──`);
  const started = Date.now();
  const res = spawnSync(cmd, args, { cwd: root, stdio: 'inherit', env });
  const ok = res.status === 0;
  tally.lines.push(`${ok ? 'ok  ' : 'FAIL'} ${label} (${((Date.now() - started) / 1000).toFixed(1)} s)`);
  return ok;
}

interface VitestJson {
  numPassedTests: number;
  numFailedTests: number;
  numTotalTests: number;
  numFailedTestSuites: number;
  success: boolean;
}

function runVitest(tally: Tally, label: string, config: string, env: NodeJS.ProcessEnv): void {
  const out = join(reports, `${label.replace(/\W+/g, '-')}.json`);
  rmSync(out, { force: true });
  const exitOk = runStep(tally, `${label} tests`, bin('vitest'), ['run', '--config', config, '--reporter=default', '--reporter=json', `--outputFile.json=${out}`], env);
  if (!existsSync(out)) {
    tally.failed += 1;
    tally.lines.push(`FAIL ${label}: the runner wrote no report`);
    return;
  }
  const report = JSON.parse(readFileSync(out, 'utf8')) as VitestJson;
  tally.passed += report.numPassedTests;
  tally.failed += report.numFailedTests;
  // A file that fails to load counts as a failure even when no test in it ran.
  if (report.numFailedTestSuites > 0 && report.numFailedTests === 0) tally.failed += report.numFailedTestSuites;
  if (!exitOk && report.numFailedTests === 0 && report.numFailedTestSuites === 0) tally.failed += 1;
  if (report.numTotalTests === 0) {
    tally.failed += 1;
    tally.lines.push(`FAIL ${label}: no tests ran`);
  }
}

export function validate(env: NodeJS.ProcessEnv): Tally {
  mkdirSync(reports, { recursive: true });
  const tally: Tally = { passed: 0, failed: 0, lines: [] };
  const check = (label: string, cmd: string, args: string[]) => {
    if (runStep(tally, label, cmd, args, env)) tally.passed += 1;
    else tally.failed += 1;
  };
  check('typecheck', bin('tsc'), ['--noEmit', '-p', '.']);
  check('lint', bin('eslint'), ['.', '--max-warnings=0']);
  runVitest(tally, 'unit', 'vitest.config.ts', env);
  runVitest(tally, 'integration', 'vitest.integration.config.ts', env);
  // Alone, after the integration tests: these kill server processes and restart the test database.
  runVitest(tally, 'resilience', 'vitest.resilience.config.ts', env);
  check('client build', bin('vite'), ['build', '--logLevel', 'warn']);
  runVitest(tally, 'browser', 'vitest.e2e.config.ts', env);
  return tally;
}

export function printTally(tally: Tally): void {
  console.log('\n── summary ──');
  for (const line of tally.lines) console.log(line);
  console.log(`${tally.passed} passed, ${tally.failed} failed`);
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const { withTestCluster } = await import('./test-cluster.ts');
  const tally = await withTestCluster((env) => validate(env));
  printTally(tally);
  process.exit(tally.failed === 0 ? 0 : 1);
}
