/**
 * The 12 V flooded lead-acid battery: open-circuit voltage from state of
 * charge and temperature, ohmic internal resistance rising as charge and
 * temperature fall and with age, and one polarisation (surface-charge) branch
 * whose resistance is small on discharge and large on charge near full, which
 * is what limits how much current a charged battery accepts.
 *
 * Terminal voltage: V = OCV(SOC, T) + V_p - I R0, with I > 0 on discharge,
 * and tau dV_p/dt = -I R_p - V_p.
 *
 * Units in names: V, A, Ohm, C, s, 01 = fraction.
 */

import { detExp } from './det-math.ts';
import type { BatteryParams } from './params.ts';

/** BCI open-circuit voltages (flooded, 26.7 C) at 0, 25, 50, 75, 100 % charge. */
const BCI_OCV_V = [11.89, 12.06, 12.24, 12.45, 12.65] as const;
const BCI_TEMP_C = 26.7;
/** The cell EMF rises slightly with temperature (about +0.2 mV/C per cell). */
const OCV_TEMP_COEFF_V_PER_C = 0.0012;

/** Open-circuit (rested) voltage. */
export function openCircuitVoltageV(soc01: number, tempC: number): number {
  const s = soc01 < 0 ? 0 : soc01 > 1 ? 1 : soc01;
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
const resistanceMemo = { k: NaN, tempC: NaN, value: 1 };
const acceptanceMemo = { k: NaN, tempC: NaN, value: 1 };

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
const fullResistanceMemo = { r25: NaN, ageYears: NaN, tempC: NaN, value: 0 };

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

/** Polarisation resistance: on discharge a fraction of R0; on charge it climbs steeply toward full. */
export function polarizationResistanceOhm(b: BatteryParams, soc01: number, dischargeA: number, r0Ohm: number): number {
  if (dischargeA >= 0) return 0.35 * r0Ohm;
  const s = soc01 < 0 ? 0 : soc01 > 1 ? 1 : soc01;
  return (0.0278 / (1 - s + 0.0556)) * expAbove25(0.02, b.tempC, acceptanceMemo) * ageFactor(b.ageYears);
}

/** Surface charge lingers at rest (tens of minutes) and collapses under load. */
const REST_TIME_CONSTANT_S = 1800;

/** Charging builds surface charge more slowly than a heavy load removes it. */
const CHARGE_TIME_FACTOR = 6;

export function polarizationTimeConstantS(b: BatteryParams, dischargeA: number): number {
  const w = detExp(-Math.abs(dischargeA) / 2);
  const underLoad = dischargeA >= 0 ? b.surfaceChargeTimeConstantS : CHARGE_TIME_FACTOR * b.surfaceChargeTimeConstantS;
  return underLoad + (REST_TIME_CONSTANT_S - underLoad) * w;
}

/** Charge efficiency: a little of the charging current goes to gassing. */
export const CHARGE_EFFICIENCY = 0.95;
