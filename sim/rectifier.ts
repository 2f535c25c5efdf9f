/**
 * The alternator's stator and six-diode bridge at one operating point.
 * `rectifierCircuitAt` describes the present operating point as the plain
 * circuit shared with the SPICE reference harness; `solveRectifier` is the
 * model's own fast solution of it.
 *
 * With a battery on the DC side (every state of the car) `solveRectifier`
 * takes exactly the step's path: the cached bridge characteristic and one
 * scalar solve (see bridge.ts). Without a battery (a resistive bench load,
 * used by reference checks) the DC side is not stiff, so it integrates the
 * bridge cycle directly with the same core that built the characteristic.
 *
 * Units are in the names: V, A, Ohm, H, Hz.
 */

import type { RectifierCircuit, RectifierSolution } from './circuit.ts';
import type { VehicleParams } from './params.ts';
import type { SimState } from './step.ts';
import type { BridgePoint, BridgeTopology } from './bridge.ts';
import { bridgeOperatingPoint, bridgeTable, diodeDropV, periodicBridge } from './bridge.ts';
import { bridgeOperatingInputs } from './instruments.ts';
import { internalResistanceOhm, openCircuitVoltageV } from './battery.ts';

export function rectifierCircuitAt(params: VehicleParams, state: SimState): RectifierCircuit {
  const op = bridgeOperatingInputs(params, state);
  const m = op.model;
  const a = m.p.alternator;
  const net = state.net;
  const postV = net.nodeV.batteryPos;
  // Everything drawing from the posts (pile, vehicle loads, starter) as one resistance across them.
  const loadA = net.branchA.pile + net.branchA.loads + net.branchA.starter;
  const loadResistanceOhm = loadA > 1e-9 && postV > 0 ? postV / loadA : Infinity;
  return {
    electricalHz: op.electricalHz,
    phaseEmfPeakV: op.emfPeakV,
    statorResistanceOhm: op.statorResistanceOhm,
    synchronousInductanceH: a.synchronousInductanceH,
    diode: {
      saturationCurrentA: a.diodeSaturationCurrentA,
      emissionCoefficient: a.diodeEmissionCoefficient,
      seriesResistanceOhm: a.diodeSeriesResistanceOhm,
    },
    openDiodes: [...a.openDiodes],
    shortedDiodes: [...a.shortedDiodes],
    openPhases: [...a.openPhases],
    battery: {
      ocvV: openCircuitVoltageV(state.batterySoc01, m.p.battery.tempC, m.p.battery.sulfation01) + state.batteryPolarizationV + state.batterySurfaceChargeV,
      internalResistanceOhm: internalResistanceOhm(m.p.battery, state.batterySoc01),
    },
    bplusResistanceOhm: m.rBplusOhm + m.rPosOhm,
    groundResistanceOhm: m.rMountOhm + m.rStrapOhm + m.rNegOhm,
    loadResistanceOhm,
  };
}

const DIRECT_STEPS_PER_CYCLE = 720;

export function solveRectifier(circuit: RectifierCircuit): RectifierSolution {
  const topology: BridgeTopology = {
    openDiodes: circuit.openDiodes,
    shortedDiodes: circuit.shortedDiodes,
    openPhases: circuit.openPhases,
  };
  const rl = circuit.loadResistanceOhm;
  // The DC side seen at the battery posts: battery in parallel with the load.
  let postTheveninV = 0;
  let postResistanceOhm = Number.isFinite(rl) ? rl : Infinity;
  if (circuit.battery) {
    const rb = circuit.battery.internalResistanceOhm;
    postTheveninV = Number.isFinite(rl) ? (circuit.battery.ocvV * rl) / (rl + rb) : circuit.battery.ocvV;
    postResistanceOhm = Number.isFinite(rl) ? (rb * rl) / (rb + rl) : rb;
  }
  const dcResistanceOhm = postResistanceOhm + circuit.bplusResistanceOhm + circuit.groundResistanceOhm;
  const omega = 2 * Math.PI * circuit.electricalHz;
  const reactanceOhm = omega * circuit.synchronousInductanceH;
  const phaseResistanceOhm = circuit.statorResistanceOhm + circuit.diode.seriesResistanceOhm;
  const diode = { saturationCurrentA: circuit.diode.saturationCurrentA, emissionCoefficient: circuit.diode.emissionCoefficient };

  let meanA: number;
  let acRmsA: number;
  let harmonic: number;
  if (circuit.battery && reactanceOhm > 0 && Number.isFinite(dcResistanceOhm)) {
    const out: BridgePoint = { meanA: 0, acRmsA: 0, dominantHarmonic: 6, dcV: 0, phaseSquaresA2: 0, statorDcA: 0 };
    bridgeOperatingPoint(
      {
        table: bridgeTable(topology),
        emfPeakV: circuit.phaseEmfPeakV,
        reactanceOhm,
        phaseResistanceOhm,
        diode,
        dcTheveninV: postTheveninV,
        dcResistanceOhm,
        guessA: 0,
      },
      out,
    );
    meanA = out.meanA;
    acRmsA = out.acRmsA;
    harmonic = out.dominantHarmonic;
  } else if (!Number.isFinite(dcResistanceOhm) || !(circuit.phaseEmfPeakV > 0)) {
    meanA = 0;
    acRmsA = 0;
    harmonic = 6;
  } else {
    // Direct periodic solution; the diode drop follows the current it carries.
    const direct = {
      topology,
      emfPeakV: circuit.phaseEmfPeakV,
      omegaRadS: omega,
      inductanceH: circuit.synchronousInductanceH,
      phaseResistanceOhm,
      diodeDropV: diodeDropV(diode, 1),
      dcTheveninV: postTheveninV,
      dcResistanceOhm,
      stepsPerCycle: DIRECT_STEPS_PER_CYCLE,
    };
    let res = periodicBridge(direct);
    for (let k = 0; k < 3; k++) {
      direct.diodeDropV = diodeDropV(diode, Math.max(0, res.meanA));
      res = periodicBridge(direct, res.startA);
    }
    meanA = res.meanA;
    acRmsA = res.acRmsA;
    harmonic = res.dominantHarmonic;
  }
  return {
    meanOutputCurrentA: meanA,
    meanBplusV: postTheveninV + dcResistanceOhm * meanA,
    meanBatteryV: postTheveninV + postResistanceOhm * meanA,
    rippleRmsV: acRmsA * postResistanceOhm,
    dominantRippleHz: harmonic * circuit.electricalHz,
  };
}
