import { describe, expect, it } from 'vitest';
import { FAULT_CATALOG, FAULT_KINDS } from '../../sim/faults.ts';
import {
  blankScenario,
  defaultPassRules,
  formatIssues,
  outputPassMarkA,
  restoreScenario,
  safeRestoreScenario,
  scenarioFieldInWords,
  scenarioSchema,
  studentScenarioView,
  type ScenarioDefinition,
} from '../../shared/scenario.ts';

function withFault(): ScenarioDefinition {
  const doc = blankScenario();
  doc.faults = [{ id: 'open-diode', kind: 'diode-open', severity01: 1, onsetS: 0, intermittent: null }];
  doc.diagnosisChoices = ['diode-open', 'diode-shorted', 'stator-phase-open', 'none'];
  return doc;
}

describe('scenario document schema', () => {
  it('accepts the blank scenario as it stands', () => {
    expect(scenarioSchema.safeParse(blankScenario()).success).toBe(true);
  });

  it('defaults the output pass mark to within 10 % of rating (common practice, no source)', () => {
    expect(defaultPassRules().output).toEqual({ mode: 'percent-of-rating', percent: 90 });
    expect(outputPassMarkA(defaultPassRules().output, 150)).toBe(135);
    expect(outputPassMarkA({ mode: 'within-amps', amps: 15 }, 150)).toBe(135);
  });

  it('defaults the battery load minimum to 9.6 V and the charged resting voltage to 12.4 V (vehicle makers’ battery test procedures, see trade facts §4)', () => {
    expect(defaultPassRules().batteryLoadMinV).toBe(9.6);
    expect(defaultPassRules().socChargedMinV).toBe(12.4);
  });

  it('names the dotted path and the allowed range of an out-of-bounds parameter', () => {
    const doc = withFault() as unknown as { vehicle: { params: { battery: { cca: number } } } };
    doc.vehicle.params.battery.cca = 5000;
    const r = safeRestoreScenario(doc);
    expect(r.success).toBe(false);
    if (r.success) return;
    const issues = formatIssues(r.error);
    expect(issues).toEqual([{ path: 'vehicle.params.battery.cca', message: expect.stringContaining('at most 1200 A') }]);
  });

  it('names array indices in fault paths and rejects unknown fault kinds', () => {
    const doc = withFault() as unknown as { faults: Record<string, unknown>[] };
    doc.faults[0]!.severity01 = 2;
    doc.faults.push({ id: 'x', kind: 'gremlins', severity01: 0.5, onsetS: 0 });
    const r = safeRestoreScenario(doc);
    expect(r.success).toBe(false);
    if (r.success) return;
    const paths = formatIssues(r.error).map((i) => i.path);
    expect(paths).toContain('faults.0.severity01');
    expect(paths).toContain('faults.1.kind');
  });

  it('requires the diagnosis choices to contain every fault kind present, naming the fault in words', () => {
    const doc = withFault();
    doc.diagnosisChoices = ['diode-shorted', 'stator-phase-open', 'none'];
    const r = scenarioSchema.safeParse(doc);
    expect(r.success).toBe(false);
    if (r.success) return;
    expect(formatIssues(r.error)).toEqual([{ path: 'diagnosisChoices', message: expect.stringContaining('“Open rectifier diode”') }]);
  });

  it('rejects unknown keys so typos in imported files are named', () => {
    const doc = { ...blankScenario(), titel: 'typo' };
    const r = scenarioSchema.safeParse(doc);
    expect(r.success).toBe(false);
    if (r.success) return;
    expect(formatIssues(r.error)[0]!.message).toMatch(/titel/);
  });

  it('rejects a file from a newer format version', () => {
    const r = safeRestoreScenario({ ...blankScenario(), formatVersion: 2 });
    expect(r.success).toBe(false);
    if (r.success) return;
    expect(formatIssues(r.error)[0]!.path).toBe('formatVersion');
  });

  it('restores a partial file by filling pass rules, parameters, lists and choices', () => {
    const partial = {
      title: 'Partial file',
      summary: 'The battery light comes on at idle.',
      vehicle: { name: 'Invented van', kind: 'van', engineDescription: '3.0 L six', params: { alternator: { ratedCurrentA: 120 } } },
      faults: [{ id: 'slip', kind: 'belt-slip', severity01: 0.4 }],
      passRules: { output: { mode: 'within-amps', amps: 15 } },
    };
    const def = restoreScenario(partial);
    expect(def.vehicle.params.alternator.ratedCurrentA).toBe(120);
    expect(def.vehicle.params.battery.cca).toBe(600);
    expect(def.passRules.output).toEqual({ mode: 'within-amps', amps: 15 });
    expect(def.passRules.maxDropPositiveV).toBe(0.2);
    expect(def.faults[0]!.onsetS).toBe(0);
    expect(def.diagnosisChoices).toContain('belt-slip');
    expect(def.diagnosisChoices).toContain('none');
    expect(def.testsExpected).toContain('output');
  });

  it('gives a student view with no faults, no tests expected, no objectives and no raw parameters', () => {
    const def = withFault();
    def.vehicle.params.alternator.openDiodes = [0];
    const view = studentScenarioView(def);
    const json = JSON.stringify(view);
    expect(view).not.toHaveProperty('faults');
    expect(view).not.toHaveProperty('testsExpected');
    expect(view).not.toHaveProperty('objectives');
    expect(view.vehicle).not.toHaveProperty('params');
    expect(json).not.toContain('open-diode');
    expect(json).not.toContain('openDiodes');
    expect([...view.diagnosisChoices].sort()).toEqual([...def.diagnosisChoices].sort());
    // The catalog's order, whatever order the author chose (the answer is not first by rule).
    expect(view.diagnosisChoices).toEqual([...FAULT_KINDS, 'none'].filter((c) => (def.diagnosisChoices as readonly string[]).includes(c)));
    expect(view.vehicle.alternatorRatedA).toBe(150);
  });

  it('knows every fault kind of the model', () => {
    for (const kind of FAULT_KINDS) {
      const doc = blankScenario();
      doc.faults = [{ id: 'f', kind, severity01: FAULT_CATALOG[kind].librarySeverity01, onsetS: 0, intermittent: null }];
      doc.testsExpected = [...FAULT_CATALOG[kind].revealedBy];
      doc.diagnosisChoices = [kind, 'none', kind === 'belt-slip' ? 'diode-open' : 'belt-slip'];
      expect(scenarioSchema.safeParse(doc).success, kind).toBe(true);
    }
  });

  it('refuses a car whose machine constants do not deliver its nameplate rating, and names the inductance that would', () => {
    // SAE J56: the rating is the output at the rating's speed, cold, 13.5 V; the editor allows 15 %.
    const doc = blankScenario();
    doc.vehicle.params.alternator.synchronousInductanceH /= 2;
    const r = safeRestoreScenario(doc);
    expect(r.success).toBe(false);
    if (r.success) return;
    const issue = formatIssues(r.error).find((i) => i.path === 'vehicle.params.alternator.ratedCurrentA');
    expect(issue?.message).toMatch(/deliver \d+ A at 6000 rpm .* synchronous inductance of about \d+ µH/);
  });

  it('refuses a battery whose resistance does not suit its CCA, and a starter its battery cannot turn at -18 °C', () => {
    // The CCA definition (7.2 V after 30 s at -18 °C: OEM GM 1999 Chevrolet Prizm) bounds the resistance of a new battery.
    const weak = blankScenario();
    weak.vehicle.params.battery.internalResistanceOhmAt25C = 0.02;
    const a = safeRestoreScenario(weak);
    expect(a.success).toBe(false);
    if (!a.success) expect(formatIssues(a.error).map((i) => i.path)).toContain('vehicle.params.battery.internalResistanceOhmAt25C');
    const hungry = blankScenario();
    hungry.vehicle.params.engine.crankCurrentA = 400;
    hungry.vehicle.params.engine.minCrankVoltageV = 10.5;
    const b = safeRestoreScenario(hungry);
    expect(b.success).toBe(false);
    if (!b.success) expect(formatIssues(b.error).find((i) => i.path === 'vehicle.params.engine.crankCurrentA')?.message).toMatch(/cannot start .* −18 °C/);
  });

  it('refuses running tests on a car that does not start with its faults, and still opens such a version once stored', () => {
    const doc = blankScenario();
    doc.faults = [{ id: 'post', kind: 'post-corroded', severity01: 0.6, onsetS: 0, intermittent: null }];
    doc.diagnosisChoices = ['post-corroded', 'battery-weak', 'none'];
    doc.testsExpected = ['cranking', 'output'];
    const r = safeRestoreScenario(doc);
    expect(r.success).toBe(false);
    if (!r.success) expect(formatIssues(r.error)).toEqual([{ path: 'testsExpected', message: expect.stringContaining('does not start') }]);
    expect(restoreScenario(doc).testsExpected).toEqual(['cranking', 'output']);
    doc.testsExpected = ['cranking', 'battery-load'];
    expect(safeRestoreScenario(doc).success).toBe(true);
  });
});

describe('a scenario field in words', () => {
  it('names the file’s fields the way the editor labels them, never as dotted paths', () => {
    expect(scenarioFieldInWords('vehicle.params.battery.cca')).toBe('Vehicle › Battery › Cold-cranking amps');
    expect(scenarioFieldInWords('definition.faults.0.severity01')).toBe('Fault 1 › Severity');
    expect(scenarioFieldInWords('passRules.output.percent')).toBe('Pass rules › Output pass mark');
    expect(scenarioFieldInWords('passRules.regulatedMaxV')).toBe('Pass rules › Highest regulated voltage');
    expect(scenarioFieldInWords('vehicle.params.loads.accessories.2.resistanceOhm')).toBe('Vehicle › Accessory 3 › Resistance');
    expect(scenarioFieldInWords('hints.1')).toBe('Hint 2');
    expect(scenarioFieldInWords('summary')).toBe('Customer’s complaint');
    expect(scenarioFieldInWords('vehicle.kind')).toBe('Vehicle › Kind');
    // A key the format does not know is named as it stands in the file.
    expect(scenarioFieldInWords('colour')).toBe('“colour”');
    expect(scenarioFieldInWords('')).toBe('The file');
  });
});
