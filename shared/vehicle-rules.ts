/**
 * The scenario editor's rules for a car as a whole, beyond each number's own
 * range: the ones that make a car coherent (errors: the editor will not save
 * it) and the ones an author may mean but should know about (warnings).
 *
 * Errors:
 *  - the nameplate rating must match what the machine constants deliver at
 *    the rating's speed (cold, 13.5 V: SAE J56) within 15 %;
 *  - the battery's internal resistance must suit its cold-cranking rating;
 *  - the starter must turn the engine fast enough to start on its own
 *    battery and cables, new and charged, at -18 C (the temperature the CCA
 *    is rated at: OEM GM, trade-facts).
 * Warnings:
 *  - the car will not start as the scenario sets it (a flat, cold or old
 *    battery, or a fault that stops it), with the reason;
 *  - the fusible link opens within a 15 s output test at the unit's rated
 *    output.
 *
 * The measurements come from the model (sim/vehicle-checks.ts).
 */
import type { Fault } from '../sim/faults.ts';
import { FAULT_TEXT } from './fault-catalogue-text.ts';
import type { VehicleParams } from '../sim/params.ts';
import { VEHICLE_PARAM_BOUNDS } from '../sim/params.ts';
import type { CrankTrial } from '../sim/vehicle-checks.ts';
import { crankTrial, deliveredAtRatingA, inductanceForRatingH } from '../sim/vehicle-checks.ts';

/** How far the delivered output may sit from the nameplate rating. */
export const NAMEPLATE_TOLERANCE = 0.15;
/**
 * Internal resistance (new, full, 25 C) times the CCA, in ohm-amperes. The
 * CCA's own definition (7.2 V after 30 s at -18 C, with the resistance about
 * 1.7 times its 25 C value) puts a battery at 3.2 or below; below 1.2 it
 * would do twice its rating. A healthy battery sits near 2-2.5 (trade-facts:
 * 3-6 milliohm for 600 CCA).
 */
export const RESISTANCE_CCA_RANGE = { min: 1.2, max: 3.2 } as const;
/** The battery a car must start on: new, charged, at the CCA's rating temperature. */
export const COLD_START_BATTERY = { tempC: -18, initialSoc01: 1, ageYears: 0, initialSurfaceChargeV: 0, sulfation01: 0 } as const;
/** A loaded output test lasts about this long (Kia: within 15 s). */
export const OUTPUT_TEST_S = 15;

export type VehicleIssueLevel = 'error' | 'warning';

export interface VehicleIssue {
  level: VehicleIssueLevel;
  /** Dotted path under the vehicle's parameters, e.g. `alternator.synchronousInductanceH`. */
  path: string;
  message: string;
}

const fmt = (x: number, digits = 0) => x.toFixed(digits);

export interface NameplateCheck {
  deliveredA: number;
  ratedA: number;
  ratio: number;
  ok: boolean;
  /** The inductance that would make the machine deliver its rating (null when none within the editor's bounds does). */
  fittedInductanceH: number | null;
}

export function nameplateCheck(params: VehicleParams): NameplateCheck {
  const a = params.alternator;
  const deliveredA = deliveredAtRatingA(params);
  const ratio = deliveredA / a.ratedCurrentA;
  const ok = Math.abs(ratio - 1) <= NAMEPLATE_TOLERANCE;
  const b = VEHICLE_PARAM_BOUNDS['alternator.synchronousInductanceH'];
  return { deliveredA, ratedA: a.ratedCurrentA, ratio, ok, fittedInductanceH: ok ? a.synchronousInductanceH : inductanceForRatingH(params, b.min, b.max) };
}

function coldStartParams(params: VehicleParams): VehicleParams {
  return { ...params, battery: { ...params.battery, ...COLD_START_BATTERY } };
}

const STOP_WORDS: Readonly<Record<NonNullable<CrankTrial['cause']>, string>> = {
  'starter-voltage-low': 'the starter gets too little voltage to turn the engine fast enough',
  'starter-circuit-open': 'no current reaches the starter',
  'supply-lost': 'the engine dies as soon as it fires',
  'crank-too-long': 'the engine does not fire within a long crank',
};

/** Which of the battery's conditions keeps a car from starting: each tried alone at its cold-start reference value. */
function batteryReason(params: VehicleParams, faults: readonly Fault[]): string | null {
  const b = params.battery;
  const tries: { when: boolean; change: Partial<VehicleParams['battery']>; words: string }[] = [
    { when: b.initialSoc01 < 0.75, change: { initialSoc01: 1 }, words: `the battery is only ${Math.round(b.initialSoc01 * 100)} % charged` },
    { when: b.tempC < 0, change: { tempC: 20 }, words: `the battery is cold (${fmt(b.tempC)} °C)` },
    { when: b.ageYears > 4, change: { ageYears: 0 }, words: `the battery is ${fmt(b.ageYears, 1)} years old` },
  ];
  const reasons = tries.filter((t) => t.when && crankTrial({ ...params, battery: { ...b, ...t.change } }, faults).started).map((t) => t.words);
  return reasons.length ? reasons.join(', and ') : null;
}

/** The car's errors only (what the scenario schema refuses). */
export function vehicleDesignErrors(params: VehicleParams): VehicleIssue[] {
  const issues: VehicleIssue[] = [];
  const a = params.alternator;
  const plate = nameplateCheck(params);
  if (!plate.ok) {
    const fit = plate.fittedInductanceH;
    issues.push({
      level: 'error',
      path: 'alternator.ratedCurrentA',
      message:
        `The machine constants deliver ${fmt(plate.deliveredA)} A at ${fmt(a.ratedAltRpm)} rpm (cold, 13.5 V), ${fmt(plate.ratio * 100)} % of the ${fmt(a.ratedCurrentA)} A rating; ` +
        `it must be within ${fmt(NAMEPLATE_TOLERANCE * 100)} %. ` +
        (fit !== null ? `A synchronous inductance of about ${fmt(fit * 1e6)} µH delivers the rating.` : 'Change the rating, the cut-in speed or the pole pairs.'),
    });
  }
  const b = params.battery;
  const product = b.internalResistanceOhmAt25C * b.cca;
  if (product < RESISTANCE_CCA_RANGE.min || product > RESISTANCE_CCA_RANGE.max) {
    const lo = (RESISTANCE_CCA_RANGE.min / b.cca) * 1000;
    const hi = (RESISTANCE_CCA_RANGE.max / b.cca) * 1000;
    issues.push({
      level: 'error',
      path: 'battery.internalResistanceOhmAt25C',
      message: `A ${fmt(b.cca)} CCA battery has an internal resistance of ${fmt(lo, 1)} to ${fmt(hi, 1)} mΩ when new (25 °C); this one is ${fmt(b.internalResistanceOhmAt25C * 1000, 1)} mΩ. Use the sulfation or the weak-battery fault for a worn battery.`,
    });
  }
  const cold = crankTrial(coldStartParams(params));
  if (!cold.started) {
    issues.push({
      level: 'error',
      path: 'engine.crankCurrentA',
      message:
        `This engine cannot start on its own battery and cables, new and charged, at −18 °C: ${STOP_WORDS[cold.cause ?? 'crank-too-long']}` +
        (cold.cause === 'starter-voltage-low' ? ` (${fmt(cold.lowestStarterV, 1)} V at the starter; it needs ${fmt(params.engine.minCrankVoltageV, 1)} V)` : '') +
        '. Fit a battery with more cold-cranking amps, heavier cables, a starter that draws less, or an engine that starts at a lower voltage.',
    });
  }
  return issues;
}

/** Errors, then warnings, for the car as the scenario sets it up (its faults present from the start). */
export function vehicleIssues(params: VehicleParams, faults: readonly Fault[] = []): VehicleIssue[] {
  const issues = vehicleDesignErrors(params);
  const trial = crankTrial(params, faults);
  if (!trial.started) {
    const battery = batteryReason(params, faults);
    const healthy = faults.length > 0 ? crankTrial(params, []).started : false;
    const culprits = healthy ? faults.filter((f) => !crankTrial(params, [f]).started).map((f) => FAULT_TEXT[f.kind].label.toLowerCase()) : [];
    const because = healthy
      ? `${culprits.length ? `the ${[...new Set(culprits)].join(' and the ')}` : 'its faults together'} ${culprits.length > 1 ? 'stop' : 'stops'} it (${STOP_WORDS[trial.cause ?? 'crank-too-long']})`
      : battery ?? STOP_WORDS[trial.cause ?? 'crank-too-long'];
    issues.push({
      level: 'warning',
      path: 'engine.minCrankVoltageV',
      message: `This car will not start as set up: ${because}. Running tests (regulated voltage, output, voltage drops, ripple) cannot be done on it; expect only the battery, cranking and draw tests.`,
    });
  }
  const w = params.wiring;
  const tau = w.fusibleLinkI2tA2s / (w.fusibleLinkRatingA * w.fusibleLinkRatingA);
  const ratio = params.alternator.ratedCurrentA / w.fusibleLinkRatingA;
  const heatAfterTest = ratio * ratio * (1 - Math.exp(-OUTPUT_TEST_S / tau));
  if (heatAfterTest >= 1) {
    issues.push({
      level: 'warning',
      path: 'wiring.fusibleLinkRatingA',
      message: `The fusible link opens within a ${OUTPUT_TEST_S} s output test at the unit's rated ${fmt(params.alternator.ratedCurrentA)} A: raise its rating or its melting I²t.`,
    });
  }
  return issues;
}
