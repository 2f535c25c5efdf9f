/**
 * The scenario editor's words for each numeric vehicle parameter: the label
 * of its field, and of its messages when a value is out of range. The ranges
 * themselves, within which the model stays stable, stay with the model
 * (`VEHICLE_PARAM_BOUNDS` in sim/params.ts).
 */
import { VEHICLE_PARAM_BOUNDS, type NumericParamPath, type ParamBound } from '../sim/params.ts';

export const PARAM_LABELS: Readonly<Record<NumericParamPath, string>> = {
  'engine.idleRpm': 'Idle speed',
  'engine.maxHeldRpm': 'Highest held speed',
  'engine.lagTimeConstantS': 'Engine speed lag',
  'engine.crankRpm': 'Cranking speed at 10 V',
  'engine.crankCurrentA': 'Starter draw at 10 V',
  'engine.minCrankVoltageV': 'Lowest starter voltage that still starts',
  'engine.crankToStartS': 'Cranking time to start',
  'belt.pulleyRatio': 'Pulley ratio',
  'belt.gripNm': 'Belt grip at the alternator pulley',
  'belt.creep01': 'Belt creep (slip at 76 % of grip)',
  'alternator.ratedCurrentA': 'Rated output',
  'alternator.ratedAltRpm': 'Speed of the rating',
  'alternator.polePairs': 'Rotor pole pairs',
  'alternator.cutInAltRpm': 'Cut-in speed (alternator)',
  'alternator.statorResistanceOhmAt20C': 'Stator resistance per phase (20 °C)',
  'alternator.synchronousInductanceH': 'Synchronous inductance per phase',
  'alternator.fieldResistanceOhmAt20C': 'Field resistance (20 °C)',
  'alternator.fieldInductanceH': 'Field inductance',
  'alternator.brushResistanceOhm': 'Brush contact resistance',
  'alternator.fieldKneeCurrentA': 'Field current at saturation knee',
  'alternator.diodeSaturationCurrentA': 'Diode saturation current',
  'alternator.diodeEmissionCoefficient': 'Diode emission coefficient',
  'alternator.diodeSeriesResistanceOhm': 'Diode series resistance',
  'alternator.keyOffLeakageA': 'Key-off leakage through the unit',
  'alternator.initialTempC': 'Alternator temperature at start',
  'alternator.fullLoadTempRiseC': 'Temperature rise at rated output',
  'alternator.thermalTimeConstantS': 'Alternator warm-up time constant',
  'alternator.efficiency01': 'Alternator efficiency',
  'regulator.setPointVAt25C': 'Regulator set point (25 °C)',
  'regulator.tempCoeffVPerC': 'Set-point temperature slope',
  'regulator.dutyFloor01': 'Minimum field duty',
  'regulator.preExcitationDuty01': 'Field duty, key on, engine stopped',
  'battery.cca': 'Cold-cranking amps',
  'battery.capacityAh': 'Capacity',
  'battery.ageYears': 'Battery age',
  'battery.initialSoc01': 'State of charge at start',
  'battery.tempC': 'Battery temperature',
  'battery.internalResistanceOhmAt25C': 'Internal resistance (new, full, 25 °C)',
  'battery.initialSurfaceChargeV': 'Surface charge at start',
  'battery.surfaceChargeTimeConstantS': 'Surface-charge time constant',
  'battery.sulfation01': 'Sulfation (0 healthy, 1 badly sulfated)',
  'wiring.bplusCableAwg': 'B+ cable gauge',
  'wiring.bplusCableLengthM': 'B+ cable length',
  'wiring.fusibleLinkAwg': 'Fusible link gauge',
  'wiring.fusibleLinkLengthM': 'Fusible link length',
  'wiring.fusibleLinkRatingA': 'Fusible link rating',
  'wiring.fusibleLinkI2tA2s': 'Fusible link melting I²t',
  'wiring.batteryPosCableAwg': 'Battery positive cable gauge',
  'wiring.batteryPosCableLengthM': 'Battery positive cable length',
  'wiring.batteryNegCableAwg': 'Battery negative cable gauge',
  'wiring.batteryNegCableLengthM': 'Battery negative cable length',
  'wiring.groundStrapAwg': 'Engine ground strap gauge',
  'wiring.groundStrapLengthM': 'Engine ground strap length',
  'wiring.connectionResistanceOhm': 'Resistance of each joint',
  'wiring.bplusExtraOhm': 'Extra B+ circuit resistance',
  'wiring.groundExtraOhm': 'Extra ground path resistance',
  'wiring.postClampPosOhm': 'Positive post-to-clamp resistance',
  'wiring.postClampNegOhm': 'Negative post-to-clamp resistance',
  'wiring.senseLineOhm': 'Sense line resistance',
  'loads.baseElectronicsA': 'Base electronics, key on',
  'loads.keyOffAwakeA': 'Key-off draw, modules awake',
  'loads.keyOffSleepA': 'Key-off draw, modules asleep',
  'loads.moduleSleepDelayS': 'Module sleep delay',
  'loads.stuckDrawA': 'Load stuck on with the key off',
  'pile.maxCurrentAAt12V': 'Carbon pile, full dial at 12 V',
  'pile.heatCapacityJPerC': 'Carbon pile heat capacity',
  'pile.coolingWPerC': 'Carbon pile cooling',
  'pile.tripC': 'Carbon pile cut-out temperature',
  'pile.resetC': 'Carbon pile reset temperature',
  'pile.warnC': 'Carbon pile warning temperature',
  ambientC: 'Ambient temperature',
  engineTempC: 'Engine coolant temperature',
};

/** A range with the label of its field. */
export interface LabelledBound extends ParamBound {
  label: string;
}

/** A vehicle parameter's range with its label, as the editor's field and the schema's messages use it. */
export function labelledBound(path: NumericParamPath): LabelledBound {
  return { ...VEHICLE_PARAM_BOUNDS[path], label: PARAM_LABELS[path] };
}
