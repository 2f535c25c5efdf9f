/**
 * The 12 V flooded lead-acid battery: open-circuit voltage from state of
 * charge and temperature, ohmic internal resistance rising as charge and
 * temperature fall and with age, and one polarisation (surface-charge) branch
 * whose resistance is small on discharge and large on charge near full, which
 * is what limits how much current a charged battery accepts.
 *
 * Terminal voltage: V = OCV(SOC, T) + V_fast + V_surface - I R0, with I > 0
 * on discharge; a gassing branch takes the charging current the plates can
 * no longer accept, which holds a charged battery near its gassing voltage.
 *
 * Units in names: V, A, Ohm, C, s, 01 = fraction.
 */

import { detExp } from './det-math.ts';
import type { BatteryParams } from './params.ts';
import { workspace } from './workspace.ts';

/** BCI open-circuit voltages (flooded, 26.7 C) at 0, 25, 50, 75, 100 % charge. */
const BCI_OCV_V = [11.89, 12.06, 12.24, 12.45, 12.65] as const;
const BCI_TEMP_C = 26.7;
/** The cell EMF rises slightly with temperature (about +0.2 mV/C per cell). */
const OCV_TEMP_COEFF_V_PER_C = 0.0012;

/**
 * Share of the electrolyte's acid that sulfation locks into the plates at
 * sulfation01 = 1: a sulfated battery rests lower even when "charged" (its
 * specific gravity, and with it the open-circuit voltage, never comes back
 * up: VW, Peugeot; trade-facts "won't take charge").
 */
export const SULFATION_ACID_LOSS = 0.6;
/** How much harder a fully sulfated battery accepts charge (it climbs to high voltage early: Hyundai, Honda). */
const SULFATION_ACCEPTANCE_FACTOR = 3;

/** Open-circuit (rested) voltage; a sulfated battery rests lower at the same state of charge. */
export function openCircuitVoltageV(soc01: number, tempC: number, sulfation01 = 0): number {
  const raw = soc01 < 0 ? 0 : soc01 > 1 ? 1 : soc01;
  const s = sulfation01 > 0 ? raw * (1 - SULFATION_ACID_LOSS * (sulfation01 > 1 ? 1 : sulfation01)) : raw;
  const f = s * 4;
  const i = Math.min(3, Math.floor(f));
  const t = f - i;
  const v = BCI_OCV_V[i]! + (BCI_OCV_V[i + 1]! - BCI_OCV_V[i]!) * t;
  return v + OCV_TEMP_COEFF_V_PER_C * (tempC - BCI_TEMP_C);
}

/** e^(k (25 - T)), remembered for the last temperature asked (the battery's is fixed). */
function expAbove25(k: number, tempC: number, memo: { k: number; tempC: number; value: number }): number {
  if (memo.tempC !== tempC || memo.k !== k) {
    memo.k = k;
    memo.tempC = tempC;
    memo.value = detExp(k * (25 - tempC));
  }
  return memo.value;
}
const { resistanceMemo, acceptanceMemo } = workspace.battery;

/** Resistance grows about 1.7x from 25 C to -18 C. */
function temperatureFactor(tempC: number): number {
  return expAbove25(0.0125, tempC, resistanceMemo);
}

function ageFactor(ageYears: number): number {
  return 1 + 0.08 * Math.max(0, ageYears);
}

/**
 * The charge-independent part of the internal resistance, R25 x age x
 * temperature, remembered for the last battery values asked: the step asks
 * twice a step for the same battery. Keyed on the values, not the object, so
 * it holds even if a caller edits the parameters in place.
 */
const { fullResistanceMemo } = workspace.battery;

function fullChargeResistanceOhm(b: BatteryParams): number {
  const memo = fullResistanceMemo;
  if (memo.r25 !== b.internalResistanceOhmAt25C || memo.ageYears !== b.ageYears || memo.tempC !== b.tempC) {
    memo.r25 = b.internalResistanceOhmAt25C;
    memo.ageYears = b.ageYears;
    memo.tempC = b.tempC;
    // Multiplied in the order the formula reads, so the product is the same bits as in one expression.
    memo.value = b.internalResistanceOhmAt25C * ageFactor(b.ageYears) * temperatureFactor(b.tempC);
  }
  return memo.value;
}

/** Ohmic internal resistance at the given charge. */
export function internalResistanceOhm(b: BatteryParams, soc01: number): number {
  const empty = 1 - (soc01 < 0 ? 0 : soc01 > 1 ? 1 : soc01);
  return fullChargeResistanceOhm(b) * (1 + 0.6 * empty * empty);
}

/** Usable capacity in ampere-seconds. */
export function capacityAs(b: BatteryParams): number {
  const age = Math.max(0.5, 1 - 0.04 * Math.max(0, b.ageYears));
  const temp = Math.min(1.1, Math.max(0.5, 1 + 0.008 * (b.tempC - 25)));
  return b.capacityAh * 3600 * age * temp;
}

/**
 * Charge acceptance: the resistance of the fast (reaction) polarisation on
 * charge, climbing steeply toward full; on discharge a fraction of R0.
 */
export function polarizationResistanceOhm(b: BatteryParams, soc01: number, dischargeA: number, r0Ohm: number): number {
  if (dischargeA >= 0) return 0.35 * r0Ohm;
  const s = soc01 < 0 ? 0 : soc01 > 1 ? 1 : soc01;
  return (0.0278 / (1 - s + 0.0556)) * expAbove25(0.02, b.tempC, acceptanceMemo) * ageFactor(b.ageYears) * (1 + SULFATION_ACCEPTANCE_FACTOR * b.sulfation01);
}

/**
 * Two polarisation branches (both in volts, added to the open-circuit voltage):
 *  - the fast one is the reaction's own overpotential: on discharge it
 *    follows the load with `surfaceChargeTimeConstantS`; on charge it builds
 *    more slowly, up to what the plates can accept (polarizationResistanceOhm,
 *    steep near full), which is what limits the current a charged battery
 *    takes; at rest it fades within a few minutes (the high reading just
 *    after the engine stops);
 *  - the slow one is the surface charge proper, acid left strong at the plate
 *    surfaces by charging: it builds over minutes of charging to a share of
 *    the fast one, lingers at rest for hours (2 h or more to settle: Peugeot,
 *    Kia; trade-facts) and is used up by a load within a minute or so (lamps,
 *    blower, defogger for 60 s: Hyundai Elantra; 300 A for 15 s: GM, Kia).
 */
const FAST_CHARGE_FACTOR = 6;
const FAST_REST_TIME_CONSTANT_S = 90;
const SLOW_REST_TIME_CONSTANT_S = 1800;
const SLOW_CHARGE_FACTOR = 10;
/** The share of the charging overpotential that the surface charge settles at. */
const SURFACE_SHARE = 0.35;

/** Weight of "at rest" for a current: 1 with no current, 0 under a load of several amps. */
function restWeight(currentA: number): number {
  return detExp(-Math.abs(currentA) / 2);
}

/** The fast branch's time constant, under load or charge, at a rest weight w. */
function fastTimeConstantS(b: BatteryParams, dischargeA: number, w: number): number {
  const underLoad = dischargeA >= 0 ? b.surfaceChargeTimeConstantS : FAST_CHARGE_FACTOR * b.surfaceChargeTimeConstantS;
  return underLoad + (FAST_REST_TIME_CONSTANT_S - underLoad) * w;
}

/** Time constant of the surface charge at a rest weight w: slow to build on charge, quick to use up under a load, hours at rest. */
function surfaceTimeConstantS(b: BatteryParams, dischargeA: number, w: number): number {
  const underLoad = dischargeA >= 0 ? b.surfaceChargeTimeConstantS : SLOW_CHARGE_FACTOR * b.surfaceChargeTimeConstantS;
  return underLoad + (SLOW_REST_TIME_CONSTANT_S - underLoad) * w;
}

/**
 * Gassing (overcharge): current the cells turn into hydrogen and oxygen
 * instead of charge. It grows tenfold for every GASSING_V_PER_DECADE the
 * cells' internal voltage rises above the gassing voltage, which starts near
 * 2.40 V per cell (14.4 V) at 25 C and falls 5 mV per cell per degree
 * (trade-facts: forum and Dunlop for 2.39-2.40 V/cell; Trojan data sheet for
 * -5 mV/C/cell). At the gassing voltage a full battery takes about 1.7 % of
 * its ampere-hour rating (common practice, no source); the slope (83 mV per
 * decade per cell) is a typical oxygen-evolution Tafel slope (from memory).
 * Together they hold a healthy full battery near 15.4 V under a 40 A charge,
 * inside the 15.5 V of the 3-minute charge test (OEM: Honda Civic), and let
 * a regulator stuck at full field drive it to about 16 V (above 16 V =
 * defective: OEM Saturn, GMC).
 */
export const GASSING_V_AT_25C = 14.4;
export const GASSING_TEMP_COEFF_V_PER_C = -0.03;
export const GASSING_V_PER_DECADE = 0.5;
const GASSING_SHARE_OF_AH = 1 / 60;
const LN10 = 2.302585092994046;
/** Above this many volts over the gassing voltage the law stops growing (far past anything a charging system drives). */
const GASSING_MAX_OVER_V = 4;
const GASSING_NEGLIGIBLE_BELOW_V = -4 * GASSING_V_PER_DECADE;

export function gassingVoltageV(b: BatteryParams): number {
  return GASSING_V_AT_25C + GASSING_TEMP_COEFF_V_PER_C * (b.tempC - 25);
}

const { gassingMemo } = workspace.battery;

/** Gassing current at an internal (open-circuit plus polarisation) voltage, and its slope dI/dV. */
export function gassingCurrentA(b: BatteryParams, internalV: number, out: { currentA: number; slopeSPerV: number }): void {
  const memo = gassingMemo;
  if (memo.capacityAh !== b.capacityAh || memo.tempC !== b.tempC) {
    memo.capacityAh = b.capacityAh;
    memo.tempC = b.tempC;
    memo.i0 = b.capacityAh * GASSING_SHARE_OF_AH;
    memo.v0 = gassingVoltageV(b);
  }
  let over = internalV - memo.v0;
  if (over < GASSING_NEGLIGIBLE_BELOW_V) {
    // Four decades below its onset the gassing current is a fraction of a milliampere: none.
    out.currentA = 0;
    out.slopeSPerV = 0;
    return;
  }
  if (over > GASSING_MAX_OVER_V) over = GASSING_MAX_OVER_V;
  const i = memo.i0 * detExp((over * LN10) / GASSING_V_PER_DECADE);
  out.currentA = i;
  out.slopeSPerV = (i * LN10) / GASSING_V_PER_DECADE;
}

/** Charge efficiency of the reaction itself (gassing is counted apart). */
export const CHARGE_EFFICIENCY = 0.98;

export interface BatteryState {
  soc01: number;
  /** Fast (reaction) polarisation. */
  fastV: number;
  /** Surface charge. */
  surfaceV: number;
  /** Current going to gassing in the last step (A). */
  gassingA: number;
}

const { gas } = workspace.battery;

/**
 * One step of the battery's slow states under the current the network gave
 * (`dischargeA`, positive leaving the battery). The fast branch is advanced
 * implicitly together with the gassing law (linearised at the last voltage),
 * so a battery pushed into gassing settles without ringing at any step size.
 */
export function stepBattery(
  b: BatteryParams,
  from: { soc01: number; fastV: number; surfaceV: number },
  dischargeA: number,
  r0Ohm: number,
  capacityAs: number,
  dtS: number,
  out: BatteryState,
): BatteryState {
  const ocv = openCircuitVoltageV(from.soc01, b.tempC, b.sulfation01);
  const internalV = ocv + from.fastV + from.surfaceV;
  gassingCurrentA(b, internalV, gas);
  const chargeA = -dischargeA;
  const rFast = polarizationResistanceOhm(b, from.soc01, dischargeA, r0Ohm);
  const w = restWeight(dischargeA);
  const a = dtS / fastTimeConstantS(b, dischargeA, w);
  // tau dVf/dt = (I_charge - I_gas(V)) R - Vf, implicit Euler with I_gas linearised.
  const g0 = gas.currentA;
  const g1 = gas.slopeSPerV;
  const fastV = (from.fastV + a * (chargeA - g0 + g1 * from.fastV) * rFast) / (1 + a + a * g1 * rFast);
  const gassingA = g0 + g1 * (fastV - from.fastV);
  const reactionA = chargeA - (gassingA > 0 ? gassingA : 0);
  const surfaceTarget = reactionA > 0 ? SURFACE_SHARE * (fastV > 0 ? fastV : 0) : 0;
  const surfaceV = surfaceTarget + (from.surfaceV - surfaceTarget) * detExp(-dtS / surfaceTimeConstantS(b, dischargeA, w));
  const dq = reactionA > 0 ? reactionA * CHARGE_EFFICIENCY * dtS : reactionA * dtS;
  let soc = from.soc01 + dq / capacityAs;
  soc = soc < 0 ? 0 : soc > 1 ? 1 : soc;
  out.soc01 = soc;
  out.fastV = fastV;
  out.surfaceV = surfaceV;
  out.gassingA = gassingA > 0 ? gassingA : 0;
  return out;
}
