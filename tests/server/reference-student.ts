/**
 * The scripted reference student: sets up each expected test as its
 * declaration in shared/test-setups.ts asks, waits until the set-up holds
 * (watching the same tracker the bench shows, fed on the same display
 * ticks), writes down what the display shows, judges each reading against
 * the scenario's pass rules and names the fault. Its log is the bench's: the
 * model's events and the readings, so the grader can take it as it is.
 *
 * It drives the car the bench is given (the compiled car) through the
 * scripted bench of sim/, like a careful student at the bench would.
 */
import { compileCar, type CompiledCar } from '../../sim/compiled-car.ts';
import type { DiagnosticTest } from '../../sim/faults.ts';
import type { ConnectionPoint } from '../../sim/inputs.ts';
import { readMeters } from '../../sim/instruments.ts';
import { ScriptedBench } from '../../sim/scripted-bench.ts';
import { DT_MS } from '../../sim/step.ts';
import type { LogEvent, RecordedReading, SubmitInput } from '../../shared/api/attempts.ts';
import { DISPLAY_TICK_MS, meterShows } from '../../shared/meter-display.ts';
import { CRANKING_MIN_V } from '../../server/grading/reference-procedures.ts';
import { outputPassMarkA, type ScenarioDefinition } from '../../shared/scenario.ts';
import {
  LOAD_CCA_FRACTION_MAX,
  LOAD_CCA_FRACTION_MIN,
  DROP_PILE_MAX_A,
  DROP_PILE_MIN_A,
  RIPPLE_OUTPUT_SHARE_MAX,
  RIPPLE_OUTPUT_SHARE_MIN,
  LOADED_ENGINE_RUN_S,
  OUTPUT_AT_LIMIT_BATTERY_A,
  OUTPUT_POST_MAX_V,
  OUTPUT_POST_MIN_V,
  SetupTracker,
  TEST_SETUPS,
  setupCarOf,
  setupSampleOf,
  type SetupStatus,
} from '../../shared/test-setups.ts';

/** The order a careful student runs the tests in: the engine-off ones before the engine first runs. */
const ORDER: readonly DiagnosticTest[] = ['key-off-draw', 'battery-ocv', 'battery-load', 'cranking', 'regulated-voltage', 'output', 'voltage-drop-positive', 'voltage-drop-ground', 'ripple'];
/** The speed the assistant holds for the running tests. */
const HELD_RPM = 2000;
/** How long the student waits at most for a set-up to hold before giving up on that test. */
const PATIENCE_MS = 15 * 60 * 1000;
/** How long the student watches a loaded reading for its worst (longer than an intermittent fault's cycle in the library). */
const WATCH_MS = 12_000;
/** ...shorter with the pile heavily loaded, to keep the burst to about 15 s. */
const WATCH_LOADED_MS = 3_000;

export interface StudentRun {
  car: CompiledCar;
  seed: number;
  /** The log as the bench would send it, by seq. */
  log: LogEvent[];
  readings: RecordedReading[];
  submission: SubmitInput;
}

/** A scripted bench that keeps the set-up tracker the bench keeps and can wait for a set-up. */
class Student extends ScriptedBench {
  readonly tracker: SetupTracker;
  readonly log: LogEvent[] = [];
  readonly readings: RecordedReading[] = [];

  constructor(car: CompiledCar, seed: number) {
    super(car.params, { seed, changes: car.changes, atLeastOneStep: true });
    this.tracker = new SetupTracker(setupCarOf(car.params));
    this.feed();
  }

  protected override push(e: Parameters<ScriptedBench['push']>[0]): this {
    super.push(e);
    this.log.push(e as LogEvent);
    return this;
  }

  /** The meters as the display shows them: the state's own controls (an event just logged takes effect at the next step). */
  shows() {
    return readMeters(this.params, this.point.state);
  }

  private feed(): void {
    this.tracker.feed(setupSampleOf(this.params, this.point.state, this.shows()));
  }

  /** Let time pass a display tick at a time (the bench's grid), feeding the tracker each tick. */
  pass(ms: number): this {
    const until = this.timeMs + ms;
    while (this.timeMs < until) {
      const toTick = DISPLAY_TICK_MS - (this.timeMs % DISPLAY_TICK_MS);
      super.wait(toTick / 1000);
      if (this.timeMs % DISPLAY_TICK_MS === 0) this.feed();
    }
    return this;
  }

  /** Waits (a tick at a time) until the test's set-up holds, or gives up. */
  until(test: DiagnosticTest, tweak?: () => void): SetupStatus | null {
    const deadline = this.timeMs + PATIENCE_MS;
    for (;;) {
      const status = this.tracker.status(test);
      if (status.holds) return status;
      if (this.timeMs >= deadline) return null;
      tweak?.();
      this.pass(DISPLAY_TICK_MS);
    }
  }

  /** Writes down what the display shows for the test now (its crank minimum for cranking). */
  record(test: DiagnosticTest, status: SetupStatus): RecordedReading | null {
    const setup = TEST_SETUPS[test];
    const shown =
      setup.reading === 'crank-minimum'
        ? status.crankMinV === null
          ? null
          : { value: status.crankMinV, unit: 'V' as const }
        : meterShows(setup.quantity, this.shows());
    if (!shown) return null;
    const reading: RecordedReading = { id: `ref-${test}`, test, quantity: setup.quantity, value: shown.value, unit: shown.unit, atMs: this.timeMs, where: 'reference student' };
    this.readings.push(reading);
    this.log.push({ kind: 'reading', atMs: this.timeMs, reading });
    return reading;
  }

  /**
   * Watches the test's reading for `watchMs` with its set-up holding, then
   * waits (up to as long again) for the display to show its largest size
   * again and gives the status there; null if the set-up is lost.
   */
  atWorst(test: DiagnosticTest, watchMs: number): SetupStatus | null {
    const q = TEST_SETUPS[test].quantity;
    const size = () => Math.abs(meterShows(q, this.shows())?.value ?? 0);
    let worst = size();
    for (let t = 0; t < watchMs; t += DISPLAY_TICK_MS) {
      this.pass(DISPLAY_TICK_MS);
      if (this.tracker.status(test).holds) worst = Math.max(worst, size());
    }
    const step = q === 'ripple' ? 1 : 0.01;
    for (let t = 0; t < watchMs; t += DISPLAY_TICK_MS) {
      const status = this.tracker.status(test);
      if (status.holds && size() >= worst - step) return status;
      this.pass(DISPLAY_TICK_MS);
    }
    const status = this.tracker.status(test);
    return status.holds ? status : null;
  }

  leadsOn(red: ConnectionPoint, black: ConnectionPoint): this {
    const c = this.point.controls.leads;
    return c.red === red && c.black === black ? this : this.leads(red, black);
  }

  running(): boolean {
    return this.point.state.engineStatus === 'running';
  }

  startEngine(): { started: boolean } {
    if (this.running()) return { started: true };
    this.key('start');
    for (let t = 0; t < 3000 && !this.running(); t += DISPLAY_TICK_MS) this.pass(DISPLAY_TICK_MS);
    const started = this.running();
    this.key(started ? 'on' : 'off').pass(200);
    return { started };
  }

  /** The pile turned until it draws about `targetA` (a few corrections, as a student turns the dial watching its ammeter). */
  pileTo(targetA: number): void {
    let dial = Math.min(1, Math.sqrt(targetA / this.params.pile.maxCurrentAAt12V));
    for (let i = 0; i < 5; i++) {
      this.pile(dial).pass(200);
      const a = this.read().pileA;
      if (!(a > 0)) break;
      dial = Math.min(1, dial * Math.sqrt(targetA / a));
    }
    this.pile(dial);
  }

  /** The alternator's output, as the clamp on the B+ cable would show it. */
  outputA(): number {
    return this.point.state.net.branchA.bplusCable;
  }
}

/** The verdict a reading gives under the scenario's pass rules. */
export function verdictOf(def: ScenarioDefinition, car: CompiledCar, r: RecordedReading, started: boolean): boolean {
  const rules = def.passRules;
  switch (r.test) {
    case 'battery-ocv':
      return r.value >= rules.socChargedMinV;
    case 'battery-load':
      return r.value >= rules.batteryLoadMinV;
    case 'cranking':
      return started && r.value >= CRANKING_MIN_V;
    case 'regulated-voltage':
      return r.value >= rules.regulatedMinV && r.value <= rules.regulatedMaxV;
    case 'output':
      return r.value >= outputPassMarkA(rules.output, def.vehicle.params.alternator.ratedCurrentA);
    case 'voltage-drop-positive':
      return Math.abs(r.value) <= rules.maxDropPositiveV;
    case 'voltage-drop-ground':
      return Math.abs(r.value) <= rules.maxDropGroundV;
    case 'ripple':
      return r.value / 1000 <= rules.maxRippleVac;
    case 'key-off-draw':
      return (r.unit === 'mA' ? r.value / 1000 : r.value) <= rules.maxKeyOffDrawA;
  }
  void car;
}

/** The reference student's whole attempt on a scenario. */
export function referenceStudent(def: ScenarioDefinition, seed = 5): StudentRun {
  const car = compileCar(def.vehicle.params, def.faults, def.vehicle.name);
  const s = new Student(car, seed);
  const cca = car.params.battery.cca;
  let started = true;
  const verdicts: { test: DiagnosticTest; pass: boolean }[] = [];
  const take = (test: DiagnosticTest, status: SetupStatus | null) => {
    if (!status) return;
    const r = s.record(test, status);
    if (r) verdicts.push({ test, pass: verdictOf(def, car, r, started) });
  };
  for (const test of ORDER.filter((t) => def.testsExpected.includes(t))) {
    switch (test) {
      case 'key-off-draw':
        s.ammeter(true);
        s.pass((car.params.loads.moduleSleepDelayS + 1) * 1000);
        take(test, s.until(test));
        s.ammeter(false).pass(200);
        break;
      case 'battery-ocv':
        s.leadsOn('battery-pos', 'battery-neg');
        take(test, s.until(test));
        break;
      case 'battery-load': {
        s.leadsOn('battery-pos', 'battery-neg').pass(200);
        s.pileTo(((LOAD_CCA_FRACTION_MIN + LOAD_CCA_FRACTION_MAX) / 2) * cca);
        take(test, s.until(test));
        s.pile(0).pass(1000);
        break;
      }
      case 'cranking': {
        s.leadsOn('battery-pos', 'battery-neg').pass(200);
        ({ started } = s.startEngine());
        take(test, s.until(test));
        break;
      }
      case 'regulated-voltage':
        s.leadsOn('battery-pos', 'battery-neg');
        s.startEngine();
        s.rpm(HELD_RPM);
        take(test, s.until(test));
        break;
      case 'output': {
        s.leadsOn('battery-pos', 'battery-neg');
        s.clamp(null).pass(200).zeroClamp().pass(100);
        s.clamp('bplus-cable', 'toward-battery').pass(200);
        s.startEngine();
        s.rpm(HELD_RPM).pass(4000);
        // Turn the pile up until the posts read about 12 V, a step at a time.
        for (let d = 0.2; d <= 1.0001; d += 0.02) {
          s.pile(Math.min(1, d)).pass(100);
          const v = s.read().voltmeterV;
          if (v !== null && v <= (OUTPUT_POST_MIN_V + OUTPUT_POST_MAX_V) / 2 + 0.4) break;
        }
        take(test, s.until(test));
        s.pile(0).pass(500);
        break;
      }
      case 'voltage-drop-positive':
      case 'voltage-drop-ground':
      case 'ripple': {
        const leads: [ConnectionPoint, ConnectionPoint] =
          test === 'voltage-drop-positive' ? ['alt-bplus', 'battery-pos'] : test === 'voltage-drop-ground' ? ['battery-neg', 'alt-case'] : ['battery-pos', 'battery-neg'];
        s.leadsOn(...leads);
        s.startEngine();
        s.rpm(HELD_RPM);
        // Run the engine in first; the pile goes on only for the reading (heavy loads in bursts).
        s.pass(LOADED_ENGINE_RUN_S * 1000);
        if (test === 'ripple') {
          // The pile turned up until the clamp on the B+ cable shows about half the rating.
          const want = ((RIPPLE_OUTPUT_SHARE_MIN + RIPPLE_OUTPUT_SHARE_MAX) / 2) * car.params.alternator.ratedCurrentA;
          for (let d = 0.05; d <= 1.0001; d += 0.01) {
            s.pile(Math.min(1, d)).pass(200);
            // A unit that cannot get there: on until the battery clearly supplies the rest.
            if (s.outputA() >= want || s.point.state.net.branchA.battery > 3 * OUTPUT_AT_LIMIT_BATTERY_A) break;
          }
        } else s.pileTo((DROP_PILE_MIN_A + DROP_PILE_MAX_A) / 2 - 2.5);
        if (!s.until(test)) break;
        // A drop or a ripple can come and go: watch a while, then write it down at its worst.
        take(test, s.atWorst(test, test === 'ripple' ? WATCH_LOADED_MS : WATCH_MS));
        break;
      }
    }
  }
  s.pass(DT_MS * 10);
  const faultKind = def.faults[0]?.kind ?? 'none';
  return {
    car,
    seed,
    log: s.log,
    readings: s.readings,
    submission: { atMs: s.timeMs, diagnosis: { verdicts, faultKind, notes: '' } },
  };
}
