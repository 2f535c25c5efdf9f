import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { FAULT_KINDS, faultChange, type FaultKind } from '../../sim/faults.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import { outputCurve, readMeters, type OutputCurvePoint } from '../../sim/instruments.ts';
import { runAttempt } from '../../sim/replay.ts';
import { formatIssues, restoreScenario, safeRestoreScenario, scenarioSchema, type ScenarioDefinition } from '../../shared/scenario.ts';

const dir = new URL('../../scenarios/', import.meta.url);
const files = readdirSync(dir).filter((f) => f.endsWith('.json')).sort();
const raw = (file: string): unknown => JSON.parse(readFileSync(new URL(file, dir), 'utf8'));
const library: { file: string; def: ScenarioDefinition }[] = files.map((file) => ({ file, def: restoreScenario(raw(file)) }));

const at = (curve: OutputCurvePoint[], rpm: number) => curve.find((p) => p.altRpm >= rpm)?.currentA ?? Number.NaN;

describe('the demo library in scenarios/', () => {
  it('has at least 14 scenarios, a healthy control, and every fault of the model at least once', () => {
    expect(files.length).toBeGreaterThanOrEqual(14);
    expect(library.some((s) => s.def.faults.length === 0)).toBe(true);
    const covered = new Set<FaultKind>(library.flatMap((s) => s.def.faults.map((f) => f.kind)));
    expect(FAULT_KINDS.filter((k) => !covered.has(k))).toEqual([]);
  });

  for (const file of files) {
    it(`${file} passes the schema as written, with nothing left to fill in`, () => {
      const doc = raw(file);
      const direct = scenarioSchema.safeParse(doc);
      expect(direct.success ? [] : formatIssues(direct.error)).toEqual([]);
      const restored = safeRestoreScenario(doc);
      expect(restored.success && restored.data).toEqual(doc);
    });
  }

  it('keeps to the brief’s ranges: ratings 60–250 A, pulleys 2.5–3.2:1, invented vehicles of the demo kinds', () => {
    for (const { file, def } of library) {
      const p = def.vehicle.params;
      expect(p.alternator.ratedCurrentA, file).toBeGreaterThanOrEqual(60);
      expect(p.alternator.ratedCurrentA, file).toBeLessThanOrEqual(250);
      expect(p.belt.pulleyRatio, file).toBeGreaterThanOrEqual(2.5);
      expect(p.belt.pulleyRatio, file).toBeLessThanOrEqual(3.2);
      expect(def.hints.length, file).toBeGreaterThan(0);
      expect(def.objectives.length, file).toBeGreaterThan(0);
    }
    expect(new Set(library.map((s) => s.def.vehicle.name)).size).toBe(library.length);
  });

  for (const { file, def } of library) {
    it(`${file} runs in the model: 20 s of start, 2,000 rpm and a pile load give finite readings`, () => {
      const p = def.vehicle.params;
      const events: InputEvent[] = [
        ...def.faults.map((fault): InputEvent => ({ kind: 'fault-inject', atMs: 0, fault })),
        { kind: 'lead', atMs: 0, which: 'red', point: 'battery-pos' },
        { kind: 'lead', atMs: 0, which: 'black', point: 'battery-neg' },
        { kind: 'key', atMs: 500, position: 'start' },
        { kind: 'key', atMs: 3_000, position: 'on' },
        { kind: 'rpm', atMs: 5_000, rpm: 2_000 },
        { kind: 'pile', atMs: 12_000, dial01: 0.4 },
        { kind: 'pile', atMs: 17_000, dial01: 0 },
      ];
      const run = runAttempt(p, 1234, events, 20_000, { snapshotEveryMs: 5_000 });
      const r = readMeters(p, run.final.state);
      expect(r.simTimeS).toBeCloseTo(20, 1);
      expect(r.voltmeterV).not.toBeNull();
      expect(Number.isFinite(r.voltmeterV)).toBe(true);
      expect(r.voltmeterV!).toBeGreaterThan(5);
      expect(r.voltmeterV!).toBeLessThan(20);
      expect(Number.isFinite(r.batterySoc01)).toBe(true);
      for (const curve of [outputCurve(p, [], { hot: false }), outputCurve(p, def.faults.map((f) => faultChange(f)), { hot: true })]) {
        expect(curve.length).toBeGreaterThan(10);
        expect(curve.every((pt) => Number.isFinite(pt.currentA) && pt.currentA >= 0)).toBe(true);
      }
    });
  }

  // The nameplate rating is given at the rating speed, cold (SAE J56 / ISO 8854, see trade facts §1);
  // "within 10 % of rating" as the band is common practice, no source.
  it('gives each healthy vehicle, cold, an output within 10 % of its rating at the rating speed', () => {
    for (const { file, def } of library) {
      const p = def.vehicle.params;
      const a = at(outputCurve(p, [], { hot: false }), p.alternator.ratedAltRpm);
      expect(a / p.alternator.ratedCurrentA, file).toBeGreaterThanOrEqual(0.9);
      expect(a / p.alternator.ratedCurrentA, file).toBeLessThanOrEqual(1.1);
    }
  });

  // An alternator fault shows as low output at idle with full load (common practice, no source).
  it('makes each scenario with a fault inside the alternator fail the output pass mark at idle', () => {
    const inside: FaultKind[] = ['diode-open', 'diode-shorted', 'stator-phase-open', 'field-open', 'wrong-rating'];
    const cases = library.filter((s) => s.def.faults.some((f) => inside.includes(f.kind)));
    expect(cases.length).toBeGreaterThanOrEqual(inside.length);
    for (const { file, def } of cases) {
      const p = def.vehicle.params;
      const idleAlt = p.engine.idleRpm * p.belt.pulleyRatio;
      const healthy = at(outputCurve(p, [], { hot: false }), idleAlt);
      const faulted = at(outputCurve(p, def.faults.map((f) => faultChange(f)), { hot: false }), idleAlt);
      expect(faulted, file).toBeLessThan(0.9 * healthy);
    }
  });
});
