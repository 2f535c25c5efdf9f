/**
 * The model's working memory lives in sim/workspace.ts (what it holds and why
 * it is safe is written there). These check the two halves of that claim:
 * no other module of sim/ keeps a mutable object of its own, and what the
 * workspace keeps never carries from one run into another, whatever order
 * runs take turns in (common practice, no source: a simulation's result
 * depends on its inputs only).
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';
import { faultChange, type Fault } from '../../sim/faults.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import { defaultVehicleParams, type VehicleParams } from '../../sim/params.ts';
import { runAttempt } from '../../sim/replay.ts';
import { DT_MS, initialState, stepInto, blankState, type SimState } from '../../sim/step.ts';
import { applyInput, type Controls } from '../../sim/inputs.ts';
import { rawClampReadingA } from '../../sim/instruments.ts';
import type { CarChange } from '../../sim/car-changes.ts';

const SIM_DIR = fileURLToPath(new URL('../../sim/', import.meta.url));

/** Word views of one double, used within one expression's evaluation (see the workspace's notes). */
const WORD_VIEWS = new Set(['wordsF64', 'wordsU32', 'lnWordsF64', 'lnWordsU32']);

const UPPER_CASE = /^[A-Z][A-Z0-9_]*$/;

function isReadonlyType(t: ts.TypeNode | undefined): boolean {
  if (!t) return false;
  const text = t.getText();
  return /^(readonly |Readonly<|ReadonlyArray<|ReadonlyMap<|ReadonlySet<)/.test(text);
}

function isConstantInitialiser(e: ts.Expression): boolean {
  if (ts.isAsExpression(e)) return e.type.getText() === 'const' || isConstantInitialiser(e.expression);
  if (ts.isSatisfiesExpression(e)) return isConstantInitialiser(e.expression);
  if (ts.isParenthesizedExpression(e)) return isConstantInitialiser(e.expression);
  if (ts.isCallExpression(e) && e.expression.getText() === 'Object.freeze') return true;
  return !(ts.isObjectLiteralExpression(e) || ts.isArrayLiteralExpression(e) || ts.isNewExpression(e) || ts.isCallExpression(e));
}

/** Top-level `const`/`let` holding an object, an array, a collection or a computed value that is not frozen or typed read-only. */
function mutableModuleState(file: string): string[] {
  const source = ts.createSourceFile(file, readFileSync(join(SIM_DIR, file), 'utf8'), ts.ScriptTarget.ES2022, true);
  const found: string[] = [];
  for (const stmt of source.statements) {
    if (!ts.isVariableStatement(stmt)) continue;
    const isLet = (stmt.declarationList.flags & ts.NodeFlags.Let) !== 0;
    for (const d of stmt.declarationList.declarations) {
      const name = d.name.getText();
      if (isLet) {
        found.push(`${file}: let ${name}`);
        continue;
      }
      if (!d.initializer || WORD_VIEWS.has(name)) continue;
      // An alias into the workspace (`const x = workspace.a.b`, `const { x } = workspace.a`) is what the rule asks for.
      if (d.initializer.getText().startsWith('workspace.')) continue;
      if (isReadonlyType(d.type) || isConstantInitialiser(d.initializer)) continue;
      // A value computed once at load (a table, a logarithm) is named as a constant and never written.
      if (UPPER_CASE.test(name) && ts.isCallExpression(d.initializer)) continue;
      found.push(`${file}: ${name}`);
    }
  }
  return found;
}

describe('the workspace holds the model’s working memory', () => {
  it('no other module of sim/ keeps a mutable object of its own', () => {
    const files = readdirSync(SIM_DIR).filter((f) => f.endsWith('.ts') && f !== 'workspace.ts');
    expect(files.length).toBeGreaterThan(10);
    expect(files.flatMap(mutableModuleState)).toEqual([]);
  });

  it('the rule sees a module-level scratch object, a collection and a let', () => {
    const probe = (code: string) => {
      const source = ts.createSourceFile('probe.ts', code, ts.ScriptTarget.ES2022, true);
      const stmt = source.statements[0] as ts.VariableStatement;
      const d = stmt.declarationList.declarations[0]!;
      const constant = isReadonlyType(d.type) || isConstantInitialiser(d.initializer!) || (UPPER_CASE.test(d.name.getText()) && ts.isCallExpression(d.initializer!));
      return (stmt.declarationList.flags & ts.NodeFlags.Let) !== 0 || !constant;
    };
    expect(probe('const scratch = { a: 0 };')).toBe(true);
    expect(probe('const cache = new Map<string, number>();')).toBe(true);
    expect(probe('let last = 0;')).toBe(true);
    expect(probe('const WORDS = ["a"] as const;')).toBe(false);
    expect(probe('const NONE = Object.freeze({ a: 0 });')).toBe(false);
    expect(probe('const LIST: readonly number[] = [1, 2];')).toBe(false);
    expect(probe('const N = 6;')).toBe(false);
    expect(probe('const LN2 = detLog(2);')).toBe(false);
    expect(probe('const memo = makeMemo();')).toBe(true);
    expect(probe('const TABLE = { a: 0 };')).toBe(true);
  });
});

/** A short attempt: leads on, engine started and held at 2,000 rpm, the pile swept, lamps on. */
const EVENTS: InputEvent[] = [
  { kind: 'lead', atMs: 500, which: 'red', point: 'battery-pos' },
  { kind: 'lead', atMs: 600, which: 'black', point: 'battery-neg' },
  { kind: 'clamp', atMs: 800, conductor: 'bplus-cable', arrow: 'toward-battery' },
  { kind: 'key', atMs: 1000, position: 'start' },
  { kind: 'key', atMs: 2200, position: 'on' },
  { kind: 'rpm', atMs: 4000, rpm: 2000 },
  { kind: 'pile', atMs: 9000, dial01: 0.4 },
  { kind: 'pile', atMs: 11000, dial01: 0.8 },
  { kind: 'pile', atMs: 13000, dial01: 0 },
  { kind: 'accessory', atMs: 15000, id: 'headlamps', on: true },
];
const UNTIL_MS = 20_000;

interface Run {
  params: VehicleParams;
  seed: number;
  changes: readonly CarChange[];
}

/** Steps a run by hand, one step at a time, so two runs can take turns. */
function stepper(run: Run): { next: () => boolean; state: () => SimState } {
  let state = initialState(run.params, run.seed, run.changes);
  let controls: Controls = state.controls;
  let i = 0;
  const spare = blankState();
  let out = spare;
  return {
    next() {
      if (state.timeMs >= UNTIL_MS) return false;
      while (i < EVENTS.length && EVENTS[i]!.atMs <= state.timeMs) {
        const ev = EVENTS[i++]!;
        controls = applyInput(controls, ev, ev.kind === 'clamp-zero' ? rawClampReadingA(state, controls) : 0);
      }
      const written = stepInto(run.params, state, controls, DT_MS, out);
      out = state;
      state = written;
      return true;
    },
    state: () => state,
  };
}

describe('no run sees another’s working values', () => {
  const healthy: Run = { params: defaultVehicleParams(), seed: 11, changes: [] };
  const faulted: Run = (() => {
    const params = defaultVehicleParams();
    params.battery.capacityAh = 45;
    params.battery.tempC = 0;
    const faults: Fault[] = [{ id: 'open-diode', kind: 'diode-open', severity01: 1, onsetS: 5 }];
    return { params, seed: 29, changes: faults.map((f) => faultChange(f)) };
  })();

  it('gives the same states run alone, after another run, and taking turns step by step with another', () => {
    const alone = runAttempt(healthy.params, healthy.seed, EVENTS, UNTIL_MS, { snapshotEveryMs: 5000, changes: healthy.changes }).final.state;
    runAttempt(faulted.params, faulted.seed, EVENTS, UNTIL_MS, { snapshotEveryMs: 5000, changes: faulted.changes });
    const after = runAttempt(healthy.params, healthy.seed, EVENTS, UNTIL_MS, { snapshotEveryMs: 5000, changes: healthy.changes }).final.state;
    expect(JSON.stringify(after)).toBe(JSON.stringify(alone));

    const a = stepper(healthy);
    const b = stepper(faulted);
    let steps = 0;
    while (a.next()) {
      b.next();
      steps++;
    }
    expect(steps).toBe(UNTIL_MS / DT_MS);
    expect(JSON.stringify(a.state())).toBe(JSON.stringify(alone));
    // The faulted run, taken in turns, matches the faulted run alone too.
    const faultedAlone = runAttempt(faulted.params, faulted.seed, EVENTS, UNTIL_MS, { snapshotEveryMs: 5000, changes: faulted.changes }).final.state;
    expect(JSON.stringify(b.state())).toBe(JSON.stringify(faultedAlone));
    // The two cars differ, so the comparison above is not of two equal runs.
    expect(JSON.stringify(faultedAlone)).not.toBe(JSON.stringify(alone));
  });
});
