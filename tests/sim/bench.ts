/**
 * Test helpers that drive the model the way a student drives the bench: a
 * growing event log, stepping in sim time, reading the meters. No physics here.
 */
import { defaultVehicleParams } from '../../sim/params';
import type { VehicleParams } from '../../sim/params';
import type { Fault, FaultKind } from '../../sim/faults';
import type { ConnectionPoint, Conductor, ClampArrow, InputEvent, KeyPosition } from '../../sim/inputs';
import { readMeters } from '../../sim/instruments';
import type { Readings } from '../../sim/instruments';
import { advance, startPoint } from '../../sim/replay';
import type { ReplayPoint } from '../../sim/replay';
import { DT_MS } from '../../sim/step';

export class Bench {
  readonly events: InputEvent[] = [];
  point: ReplayPoint;

  constructor(
    readonly params: VehicleParams = defaultVehicleParams(),
    seed = 7,
  ) {
    this.point = startPoint(params, seed);
  }

  get timeMs(): number {
    return this.point.state.timeMs;
  }

  private push(e: InputEvent): this {
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
  bplus(connected: boolean): this {
    return this.push({ kind: 'bplus-disconnect', atMs: this.timeMs, connected });
  }
  inject(kind: FaultKind, severity01 = 0.5, extra: Partial<Fault> = {}): this {
    return this.push({ kind: 'fault-inject', atMs: this.timeMs, fault: { id: `${kind}-${this.events.length}`, kind, severity01, onsetS: this.timeMs / 1000, ...extra } });
  }

  /** Let sim time pass. */
  wait(seconds: number): this {
    this.point = advance(this.params, this.point, this.events, Math.round((seconds * 1000) / DT_MS));
    return this;
  }

  read(): Readings {
    return readMeters(this.params, this.point.state, this.point.controls);
  }

  /** Start the engine the way a student does: crank, release when it fires. */
  start(): this {
    this.key('start');
    for (let i = 0; i < 40 && this.point.state.engineStatus !== 'running'; i++) this.wait(0.1);
    return this.key('on').wait(0.2);
  }

  /**
   * Turn the pile up in small steps (about 3 s in all) until the voltmeter
   * reads `targetV` or less, as a student does for the output test.
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

/**
 * The output test as a student does it: leads on the posts, clamp zeroed in
 * air then put on the B+ cable with its arrow toward the battery, start,
 * 2,000 rpm, pile turned up until the battery reads about 12 V. Returns the
 * meters at that moment with the pile still on (the caller turns it off).
 */
export function outputTest(setup: (b: Bench) => void = () => undefined, params?: VehicleParams): { bench: Bench; loaded: Readings } {
  const b = new Bench(params);
  setup(b);
  b.leads('battery-pos', 'battery-neg').clamp(null).wait(0.2).zeroClamp().wait(0.05);
  b.clamp('bplus-cable', 'toward-battery');
  b.start().rpm(2000).wait(4).loadTo(12.0);
  return { bench: b, loaded: b.read() };
}
