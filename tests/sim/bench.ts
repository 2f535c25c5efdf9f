/**
 * Test helpers that drive the model the way a student drives the bench: the
 * scripted bench of sim/ with the tests' defaults (the default car, seed 7,
 * waits rounded to the nearest step), plus fault injection and a start.
 * No physics here.
 */
import { defaultVehicleParams } from '../../sim/params';
import type { VehicleParams } from '../../sim/params';
import type { Fault, FaultKind } from '../../sim/faults';
import type { Readings } from '../../sim/instruments';
import { ScriptedBench } from '../../sim/scripted-bench';

export class Bench extends ScriptedBench {
  constructor(params: VehicleParams = defaultVehicleParams(), seed = 7) {
    super(params, { seed });
  }

  inject(kind: FaultKind, severity01 = 0.5, extra: Partial<Fault> = {}): this {
    return this.push({ kind: 'fault-inject', atMs: this.timeMs, fault: { id: `${kind}-${this.events.length}`, kind, severity01, onsetS: this.timeMs / 1000, ...extra } });
  }

  /** Start the engine the way a student does: crank, release when it fires. */
  start(): this {
    this.key('start');
    for (let i = 0; i < 40 && this.point.state.engineStatus !== 'running'; i++) this.wait(0.1);
    return this.key('on').wait(0.2);
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
