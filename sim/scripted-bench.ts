/**
 * A scripted bench: drives the model the way a student drives the bench, with
 * a growing event log, stepping in sim time and reading the meters. Each
 * action is logged at the current sim time; `wait` lets time pass. No physics
 * here: the run is `advance` over the log, as in a replay.
 *
 * Units are in the names: s, ms, V.
 */
import type { VehicleParams } from './params.ts';
import type { CarChange } from './car-changes.ts';
import type { ClampArrow, Conductor, ConnectionPoint, InputEvent, KeyPosition } from './inputs.ts';
import { readMeters, type Readings } from './instruments.ts';
import { advance, startPoint, type ReplayPoint } from './replay.ts';
import { DT_MS } from './step.ts';

export interface ScriptedBenchOptions {
  /** Seed of the run. */
  seed: number;
  /** Events already in the log at the start (faults present from time zero, say). */
  events?: readonly InputEvent[];
  /** The car's schedule of changes (a compiled car's), in force from the first state. */
  changes?: readonly CarChange[];
  /**
   * Take at least one step on every wait. Without it a wait shorter than half
   * a step rounds to no steps and lets no time pass.
   */
  atLeastOneStep?: boolean;
}

export class ScriptedBench {
  readonly events: InputEvent[];
  point: ReplayPoint;
  private readonly atLeastOneStep: boolean;

  constructor(
    readonly params: VehicleParams,
    options: ScriptedBenchOptions,
  ) {
    this.point = startPoint(params, options.seed, options.changes);
    this.events = [...(options.events ?? [])];
    this.atLeastOneStep = options.atLeastOneStep ?? false;
  }

  get timeMs(): number {
    return this.point.state.timeMs;
  }

  protected push(e: InputEvent): this {
    this.events.push(e);
    return this;
  }

  key(position: KeyPosition): this {
    return this.push({ kind: 'key', atMs: this.timeMs, position });
  }
  rpm(rpm: number): this {
    return this.push({ kind: 'rpm', atMs: this.timeMs, rpm });
  }
  pile(dial01: number): this {
    return this.push({ kind: 'pile', atMs: this.timeMs, dial01 });
  }
  leads(red: ConnectionPoint | null, black: ConnectionPoint | null): this {
    this.push({ kind: 'lead', atMs: this.timeMs, which: 'red', point: red });
    return this.push({ kind: 'lead', atMs: this.timeMs, which: 'black', point: black });
  }
  clamp(conductor: Conductor | null, arrow: ClampArrow = 'toward-battery'): this {
    return this.push({ kind: 'clamp', atMs: this.timeMs, conductor, arrow });
  }
  zeroClamp(): this {
    return this.push({ kind: 'clamp-zero', atMs: this.timeMs });
  }
  accessory(id: string, on: boolean): this {
    return this.push({ kind: 'accessory', atMs: this.timeMs, id, on });
  }
  ammeter(inSeries: boolean): this {
    return this.push({ kind: 'ammeter', atMs: this.timeMs, inSeries });
  }
  /** Fit a new fuse in the series ammeter. */
  replaceAmmeterFuse(): this {
    return this.push({ kind: 'ammeter-fuse', atMs: this.timeMs });
  }
  bplus(connected: boolean): this {
    return this.push({ kind: 'bplus-disconnect', atMs: this.timeMs, connected });
  }

  /** Let sim time pass: the nearest whole number of steps. */
  wait(seconds: number): this {
    const steps = Math.round((seconds * 1000) / DT_MS);
    this.point = advance(this.params, this.point, this.events, this.atLeastOneStep ? Math.max(1, steps) : steps);
    return this;
  }

  read(): Readings {
    return readMeters(this.params, this.point.state, this.point.controls);
  }

  /**
   * Turn the pile up in small steps, 0.1 s apart (about 3 s in all), until the
   * voltmeter reads `targetV` or less, then hold half a second: the output
   * procedure's loading.
   */
  loadTo(targetV: number): this {
    for (let d = 0.2; d <= 1.0001; d += 0.02) {
      this.pile(Math.min(1, d)).wait(0.1);
      const v = this.read().voltmeterV;
      if (v !== null && v <= targetV) break;
    }
    return this.wait(0.5);
  }
}
