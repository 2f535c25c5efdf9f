/**
 * `npm run bench:sim`: how fast the model runs, each figure beside its goal.
 *
 *  - first use: building the healthy bridge characteristic (once per process)
 *  - steps per second of the pure step, steady state
 *  - re-running a 10-minute attempt from its event log (start, rpm changes, pile sweeps)
 *  - seeking to a random moment of a 30-minute attempt with snapshots (median of many seeks)
 *  - one steady operating point: the model's `solveRectifier` on a reference circuit, and,
 *    when the SPICE harness is present (tests/reference/spice-harness.ts exporting
 *    `spiceSolve`), ngspice on the same circuit: the ratio and the differences
 *
 * Each timing is repeated five times; the spread (min–max) is the machine's noise.
 */
import { existsSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import { fileURLToPath } from 'node:url';
import { defaultVehicleParams } from '../sim/params.ts';
import type { InputEvent } from '../sim/inputs.ts';
import { DT_MS, initialState, step } from '../sim/step.ts';
import { runAttempt, stateAt } from '../sim/replay.ts';
import { rectifierCircuitAt, solveRectifier } from '../sim/rectifier.ts';
import { bridgeTable } from '../sim/bridge.ts';
import type { RectifierCircuit, RectifierSolution } from '../sim/circuit.ts';

const GOAL_RERUN_10_MIN_MS = 100;
const GOAL_SEEK_MS = 16;
const SNAPSHOT_EVERY_MS = 5000;
const REPEATS = 5;

const params = defaultVehicleParams();

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const mid = s.length >> 1;
  return s.length % 2 ? s[mid]! : (s[mid - 1]! + s[mid]!) / 2;
}

function spread(xs: number[], digits = 1): string {
  return `median ${median(xs).toFixed(digits)}, min ${Math.min(...xs).toFixed(digits)}, max ${Math.max(...xs).toFixed(digits)} over ${xs.length}`;
}

function line(label: string, figure: string, goal = ''): void {
  console.log(`${label.padEnd(44)} ${figure}${goal ? `   [goal: ${goal}]` : ''}`);
}

/** A deterministic stand-in for a student's attempt: start, rpm changes, pile sweeps, meters moved. */
function realisticEvents(minutes: number): InputEvent[] {
  const events: InputEvent[] = [
    { kind: 'lead', atMs: 2000, which: 'red', point: 'battery-pos' },
    { kind: 'lead', atMs: 2500, which: 'black', point: 'battery-neg' },
    { kind: 'clamp-zero', atMs: 4000 },
    { kind: 'clamp', atMs: 5000, conductor: 'bplus-cable', arrow: 'toward-battery' },
    { kind: 'key', atMs: 10000, position: 'start' },
    { kind: 'key', atMs: 11200, position: 'on' },
  ];
  for (let t = 30000; t < minutes * 60000 - 60000; t += 90000) {
    events.push({ kind: 'rpm', atMs: t, rpm: 2000 });
    for (let k = 0; k <= 20; k++) events.push({ kind: 'pile', atMs: t + 5000 + k * 400, dial01: k / 26 });
    events.push({ kind: 'pile', atMs: t + 20000, dial01: 0 });
    events.push({ kind: 'accessory', atMs: t + 25000, id: 'headlamps', on: true });
    events.push({ kind: 'lead', atMs: t + 30000, which: 'red', point: 'alt-bplus' });
    events.push({ kind: 'lead', atMs: t + 40000, which: 'red', point: 'battery-pos' });
    events.push({ kind: 'accessory', atMs: t + 50000, id: 'headlamps', on: false });
    events.push({ kind: 'rpm', atMs: t + 60000, rpm: 0 });
  }
  return events;
}

function time(fn: () => void): number {
  const t0 = performance.now();
  fn();
  return performance.now() - t0;
}

/** A small seeded generator for the seek targets (the bench itself must be repeatable too). */
function seededTargets(count: number, maxMs: number): number[] {
  let s = 12345;
  const out: number[] = [];
  for (let i = 0; i < count; i++) {
    s = (Math.imul(s, 1103515245) + 12345) >>> 0;
    out.push(Math.floor((s / 2 ** 32) * maxMs));
  }
  return out;
}

function load(): string {
  return `load average ${loadavg()[0]!.toFixed(1)} on ${availableParallelism()} cores`;
}

async function main(): Promise<void> {
  console.log(`Loadline model benchmark (DT_MS = ${DT_MS}, snapshots every ${SNAPSHOT_EVERY_MS / 1000} s, Node ${process.version})`);
  console.log(`Machine: ${load()} (a load above the core count slows every figure below)\n`);

  // First use: the healthy bridge characteristic is built once per process.
  const tableMs = time(() => bridgeTable({ openDiodes: [], shortedDiodes: [], openPhases: [] }));
  line('first use: build the bridge characteristic', `${tableMs.toFixed(1)} ms (once per process and bridge topology)`);
  const tenMinutes = realisticEvents(10);
  const cold = time(() => runAttempt(params, 1, tenMinutes, 10 * 60000, { snapshotEveryMs: SNAPSHOT_EVERY_MS }));
  line('10-minute re-run, first in the process', `${cold.toFixed(1)} ms (before the JIT has warmed up)`);

  // Steps per second of the bare step: engine at 2,000 rpm with the headlamps on.
  const rates: number[] = [];
  for (let r = 0; r < REPEATS; r++) {
    let s = initialState(params, 1);
    const starting = { ...s.controls, key: 'start' as const };
    for (let i = 0; i < 150; i++) s = step(params, s, starting, DT_MS);
    const running = { ...s.controls, key: 'on' as const, heldRpm: 2000, accessoriesOn: ['headlamps'] };
    const n = 60_000;
    const ms = time(() => {
      for (let i = 0; i < n; i++) s = step(params, s, running, DT_MS);
    });
    rates.push(n / (ms / 1000));
  }
  line('steps per second', `${spread(rates.map((x) => x / 1e6), 2)} million`, `at least ${((600_000 / DT_MS / GOAL_RERUN_10_MIN_MS) * 1000 / 1e6).toFixed(2)} million for the re-run goal`);

  const reruns: number[] = [];
  const rerunCpu: number[] = [];
  for (let r = 0; r < REPEATS; r++) {
    const cpu0 = process.cpuUsage();
    reruns.push(time(() => runAttempt(params, 1, tenMinutes, 10 * 60000, { snapshotEveryMs: SNAPSHOT_EVERY_MS })));
    const cpu = process.cpuUsage(cpu0);
    rerunCpu.push((cpu.user + cpu.system) / 1000);
  }
  line('10-minute attempt re-run (warm)', `${spread(reruns)} ms`, `< ${GOAL_RERUN_10_MIN_MS} ms`);
  line('  the same, CPU time of this process', `${spread(rerunCpu)} ms`);

  const thirty = realisticEvents(30);
  const run = runAttempt(params, 1, thirty, 30 * 60000, { snapshotEveryMs: SNAPSHOT_EVERY_MS });
  const seekMedians: number[] = [];
  const seekWorst: number[] = [];
  for (let r = 0; r < REPEATS; r++) {
    const times = seededTargets(25, 30 * 60000).map((atMs) => time(() => stateAt(params, 1, thirty, atMs + r, run.snapshots)));
    seekMedians.push(median(times));
    seekWorst.push(Math.max(...times));
  }
  line('seek in a 30-minute attempt (median of 25)', `${spread(seekMedians, 2)} ms`, `< ${GOAL_SEEK_MS} ms`);
  line('seek, slowest of 25', `${spread(seekWorst, 2)} ms`, `< ${GOAL_SEEK_MS} ms`);
  line('snapshots kept for 30 minutes', `${run.snapshots.length} (${(JSON.stringify(run.snapshots).length / 1e6).toFixed(1)} MB as JSON)`);

  // One steady operating point: 2,000 rpm with the pile pulling the battery to about 12 V.
  const reference = runAttempt(
    params,
    1,
    [
      { kind: 'key', atMs: 0, position: 'start' },
      { kind: 'key', atMs: 1500, position: 'on' },
      { kind: 'rpm', atMs: 2000, rpm: 2000 },
      { kind: 'pile', atMs: 5000, dial01: 0.75 },
    ],
    9000,
    { snapshotEveryMs: SNAPSHOT_EVERY_MS },
  ).final.state;
  const circuit: RectifierCircuit = rectifierCircuitAt(params, reference);
  let model: RectifierSolution = solveRectifier(circuit);
  const calls = 20_000;
  const perCall: number[] = [];
  for (let r = 0; r < REPEATS; r++) {
    const ms = time(() => {
      for (let i = 0; i < calls; i++) model = solveRectifier(circuit);
    });
    perCall.push((ms * 1000) / calls);
  }
  line('model: one operating point (solveRectifier)', `${spread(perCall, 2)} µs`);
  line('  mean output / B+ voltage', `${model.meanOutputCurrentA.toFixed(2)} A / ${model.meanBplusV.toFixed(3)} V`);

  // ---- Hook: model against SPICE on the same circuit --------------------------
  const harness = fileURLToPath(new URL('../tests/reference/spice-harness.ts', import.meta.url));
  if (!existsSync(harness)) {
    line('SPICE comparison', 'skipped (tests/reference/spice-harness.ts not present)');
    return;
  }
  const mod = (await import(harness)) as {
    spiceSolve?: (c: RectifierCircuit) => Promise<RectifierSolution>;
    warmUpSpice?: () => Promise<void>;
  };
  if (typeof mod.spiceSolve !== 'function') {
    line('SPICE comparison', 'skipped (the harness does not export spiceSolve)');
    return;
  }
  if (mod.warmUpSpice) await mod.warmUpSpice();
  const spiceMs: number[] = [];
  let spice: RectifierSolution | null = null;
  for (let r = 0; r < REPEATS; r++) {
    const t0 = performance.now();
    spice = await mod.spiceSolve(circuit);
    spiceMs.push(performance.now() - t0);
  }
  const pct = (a: number, b: number) => `${(100 * (a / b - 1)).toFixed(2)} %`;
  line('ngspice: the same operating point', `${spread(spiceMs)} ms`);
  line('  model faster by', `${((median(spiceMs) * 1000) / median(perCall)).toFixed(0)}x`);
  line('  mean output current, model vs SPICE', `${model.meanOutputCurrentA.toFixed(2)} vs ${spice!.meanOutputCurrentA.toFixed(2)} A (${pct(model.meanOutputCurrentA, spice!.meanOutputCurrentA)})`, 'within 5 %');
  line('  mean B+ voltage, model vs SPICE', `${model.meanBplusV.toFixed(3)} vs ${spice!.meanBplusV.toFixed(3)} V (${pct(model.meanBplusV, spice!.meanBplusV)})`, 'within 5 %');
  line('  mean battery voltage, model vs SPICE', `${model.meanBatteryV.toFixed(3)} vs ${spice!.meanBatteryV.toFixed(3)} V (${pct(model.meanBatteryV, spice!.meanBatteryV)})`, 'within 5 %');
}

main()
  .then(() => console.log(`\nMachine at the end: ${load()}`))
  .catch((error: unknown) => {
    console.error(error);
    process.exitCode = 1;
  });
