/**
 * Vehicle parameters: everything the model needs to know about one car's
 * engine, belt, alternator, regulator, battery, wiring and loads, plus the
 * bench's carbon-pile tester. Plain JSON data; a scenario stores one of these.
 *
 * Units are in the field names (V, A, Ohm, H, S, s, C = degrees Celsius,
 * Nm, Ah, J, W, m, Awg = American wire gauge number, 01 = a fraction 0..1).
 *
 * Fields that faults transform (open diodes, extra resistances, a stuck draw)
 * are ordinary parameters too: a healthy car has them empty or zero.
 */

export interface EngineParams {
  idleRpm: number;
  /** Highest rpm the assistant will hold on the throttle. */
  maxHeldRpm: number;
  /** First-order lag of engine speed toward the held rpm. */
  lagTimeConstantS: number;
  /** Cranking speed with 10 V at the starter. */
  crankRpm: number;
  /** Starter draw with 10 V at the starter. */
  crankCurrentA: number;
  /** Below this at the starter the engine turns too slowly to fire. */
  minCrankVoltageV: number;
  /** Cranking time at or above the minimum voltage before the engine fires. */
  crankToStartS: number;
}

export interface BeltParams {
  /** Crank pulley diameter over alternator pulley diameter. */
  pulleyRatio: number;
  /**
   * Largest torque the belt can pass to the alternator pulley (its grip):
   * the belt's torque follows grip x tanh(slip / creep), so it creeps a little
   * under any load and slides once the torque asked reaches the grip.
   */
  gripNm: number;
  /** Slip at which the belt passes tanh(1) = 76 % of its grip: about 1 % for a good belt, more for a glazed or loose one. */
  creep01: number;
}

export interface AlternatorParams {
  /** Nameplate rating (SAE J56 I_R: hot-rated unit, cold, 13.5 V, at ratedAltRpm). */
  ratedCurrentA: number;
  /** Alternator speed at which the nameplate rating is given. */
  ratedAltRpm: number;
  polePairs: number;
  /** Alternator speed at which the full-field unit just reaches 13.5 V with no load. */
  cutInAltRpm: number;
  /** One stator phase (star), copper at 20 C. */
  statorResistanceOhmAt20C: number;
  /** Per-phase synchronous inductance: what makes output self-limit at speed. */
  synchronousInductanceH: number;
  /** Rotor (field) winding at 20 C. */
  fieldResistanceOhmAt20C: number;
  fieldInductanceH: number;
  /** Brush and slip-ring contact resistance in series with the field (worn brushes raise it). */
  brushResistanceOhm: number;
  /** Field current at which the claw-pole iron is at the knee of saturation. */
  fieldKneeCurrentA: number;
  /** Rectifier diodes (Shockley model), all six alike. */
  diodeSaturationCurrentA: number;
  diodeEmissionCoefficient: number;
  diodeSeriesResistanceOhm: number;
  /** Failed diodes, indices 0..5: 0-2 positive (phases A-C to B+), 3-5 negative (case to A-C). */
  openDiodes: number[];
  shortedDiodes: number[];
  /** Open stator phases, indices 0..2. */
  openPhases: number[];
  /** Current from B+ to case through the unit with the engine stopped (a leaking or shorted diode feeding the field circuit); 0 when healthy. */
  keyOffLeakageA: number;
  /** Winding temperature at the start of the attempt. */
  initialTempC: number;
  /** Winding temperature rise above underhood air at sustained rated output. */
  fullLoadTempRiseC: number;
  thermalTimeConstantS: number;
  /** Electrical output power over shaft power, for the belt torque. */
  efficiency01: number;
}

export type RegulatorSense = 'battery' | 'bplus';

export interface RegulatorParams {
  /** Regulated voltage at the sense point with the regulator at 25 C. */
  setPointVAt25C: number;
  /** Set-point change per degree of regulator temperature (negative: lower when hot). */
  tempCoeffVPerC: number;
  /** Where the regulator reads the voltage it holds: the battery (remote sense line) or its own B+ stud. */
  sense: RegulatorSense;
  /** Field duty the regulator never goes below (a shorted field driver is 1: full field). */
  dutyFloor01: number;
  /** Field duty with the key on and the engine stopped (pre-excitation). */
  preExcitationDuty01: number;
}

export interface BatteryParams {
  /** Cold-cranking amps: 30 s at -18 C to 7.2 V, new. */
  cca: number;
  capacityAh: number;
  ageYears: number;
  initialSoc01: number;
  tempC: number;
  /** Ohmic internal resistance, new, full, at 25 C. */
  internalResistanceOhmAt25C: number;
  /** Surface charge at the start (e.g. just off the charger); decays at rest. */
  initialSurfaceChargeV: number;
  /** Time constant of the surface (polarisation) charge. */
  surfaceChargeTimeConstantS: number;
  /** Sulfation, 0 healthy to 1: acid locked in the plates (rests lower) and slow to take charge. */
  sulfation01: number;
}

export interface WiringParams {
  /** Alternator B+ stud to the positive junction (jump post, fuse box). */
  bplusCableAwg: number;
  bplusCableLengthM: number;
  /** Fusible link in the B+ cable. */
  fusibleLinkAwg: number;
  fusibleLinkLengthM: number;
  /** Current the link carries indefinitely; above it the link heats toward melting. */
  fusibleLinkRatingA: number;
  /** Adiabatic melting integral: a large overload opens the link after about I2t / I^2 seconds. */
  fusibleLinkI2tA2s: number;
  /** A link that is open (burnt) from the start. */
  fusibleLinkOpen: boolean;
  batteryPosCableAwg: number;
  batteryPosCableLengthM: number;
  batteryNegCableAwg: number;
  batteryNegCableLengthM: number;
  /** Engine block to body. */
  groundStrapAwg: number;
  groundStrapLengthM: number;
  /** Each bolted or crimped joint. */
  connectionResistanceOhm: number;
  /** Extra resistance in the B+ circuit (corroded terminal, damaged cable). */
  bplusExtraOhm: number;
  /** Extra resistance between the alternator case and the engine block (corroded mounting or case ground). */
  groundExtraOhm: number;
  /** Battery post to cable clamp, positive and negative. */
  postClampPosOhm: number;
  postClampNegOhm: number;
  /** Regulator sense line to the battery positive. */
  senseLineOhm: number;
}

/**
 * A switchable vehicle load: either a constant current (electronics) or a
 * resistance (lamps, heaters). `keyOff`: fed straight from the battery, so it
 * works with the key off too (the headlamps on most cars); otherwise it is
 * fed through the ignition switch.
 */
export type AccessoryParams =
  | { id: string; label: string; currentA: number; keyOff?: boolean }
  | { id: string; label: string; resistanceOhm: number; keyOff?: boolean };

export interface LoadParams {
  /** Engine-management and body electronics with the key on. */
  baseElectronicsA: number;
  /** Draw with the key off while modules are still awake. */
  keyOffAwakeA: number;
  /** Draw with the key off after every module has gone to sleep. */
  keyOffSleepA: number;
  /** Time after key-off (or after the battery circuit is broken) before modules sleep. */
  moduleSleepDelayS: number;
  accessories: AccessoryParams[];
  /** A load that stays on with the key off (glovebox lamp, relay stuck on); 0 when healthy. */
  stuckDrawA: number;
}

export interface PileParams {
  /** Current the carbon pile draws at 12 V with the dial fully on. */
  maxCurrentAAt12V: number;
  heatCapacityJPerC: number;
  coolingWPerC: number;
  /** Thermal cut-out: the pile opens above this... */
  tripC: number;
  /** ...and closes again only with the dial at zero and the pile below this. */
  resetC: number;
  /** Temperature at which the dial's heat band turns amber. */
  warnC: number;
}

export interface VehicleParams {
  label: string;
  engine: EngineParams;
  belt: BeltParams;
  alternator: AlternatorParams;
  regulator: RegulatorParams;
  battery: BatteryParams;
  wiring: WiringParams;
  loads: LoadParams;
  pile: PileParams;
  ambientC: number;
  engineTempC: number;
}

/** An invented midsize car: 150 A alternator on a 2.8:1 pulley, 600 CCA 60 Ah battery. */
export function defaultVehicleParams(): VehicleParams {
  return {
    label: 'Midsize sedan, 2.4 L (invented)',
    engine: {
      idleRpm: 750,
      maxHeldRpm: 3500,
      lagTimeConstantS: 0.35,
      crankRpm: 200,
      crankCurrentA: 170,
      minCrankVoltageV: 8.5,
      crankToStartS: 0.9,
    },
    belt: { pulleyRatio: 2.8, gripNm: 28, creep01: 0.01 },
    alternator: {
      ratedCurrentA: 150,
      ratedAltRpm: 6000,
      polePairs: 6,
      cutInAltRpm: 865,
      statorResistanceOhmAt20C: 0.022,
      synchronousInductanceH: 88e-6,
      fieldResistanceOhmAt20C: 2.7,
      fieldInductanceH: 0.22,
      brushResistanceOhm: 0.1,
      fieldKneeCurrentA: 4.0,
      diodeSaturationCurrentA: 1e-7,
      diodeEmissionCoefficient: 1.6,
      diodeSeriesResistanceOhm: 0.0015,
      openDiodes: [],
      shortedDiodes: [],
      openPhases: [],
      keyOffLeakageA: 0,
      initialTempC: 25,
      fullLoadTempRiseC: 80,
      thermalTimeConstantS: 600,
      efficiency01: 0.55,
    },
    regulator: {
      setPointVAt25C: 14.2,
      tempCoeffVPerC: -0.01,
      sense: 'battery',
      dutyFloor01: 0,
      preExcitationDuty01: 0.15,
    },
    battery: {
      cca: 600,
      capacityAh: 60,
      ageYears: 1,
      initialSoc01: 0.9,
      tempC: 25,
      internalResistanceOhmAt25C: 0.0035,
      initialSurfaceChargeV: 0,
      surfaceChargeTimeConstantS: 20,
      sulfation01: 0,
    },
    wiring: {
      bplusCableAwg: 4,
      bplusCableLengthM: 1.0,
      fusibleLinkAwg: 8,
      fusibleLinkLengthM: 0.15,
      fusibleLinkRatingA: 140,
      fusibleLinkI2tA2s: 392_000,
      fusibleLinkOpen: false,
      batteryPosCableAwg: 2,
      batteryPosCableLengthM: 0.6,
      batteryNegCableAwg: 2,
      batteryNegCableLengthM: 0.5,
      groundStrapAwg: 4,
      groundStrapLengthM: 0.4,
      connectionResistanceOhm: 0.0002,
      bplusExtraOhm: 0,
      groundExtraOhm: 0,
      postClampPosOhm: 0.0001,
      postClampNegOhm: 0.0001,
      senseLineOhm: 0.05,
    },
    loads: {
      baseElectronicsA: 12,
      keyOffAwakeA: 0.45,
      keyOffSleepA: 0.025,
      moduleSleepDelayS: 180,
      accessories: [
        { id: 'headlamps', label: 'Headlamps (low beam)', resistanceOhm: 1.3, keyOff: true },
        { id: 'high-beams', label: 'High beams', resistanceOhm: 1.2, keyOff: true },
        { id: 'blower', label: 'Heater blower (high)', resistanceOhm: 0.75 },
        { id: 'rear-defrost', label: 'Rear window defroster', resistanceOhm: 0.9 },
        { id: 'wipers', label: 'Wipers', currentA: 5 },
        { id: 'audio', label: 'Audio system', currentA: 4 },
        { id: 'radiator-fan', label: 'Radiator fan', currentA: 22 },
      ],
      stuckDrawA: 0,
    },
    pile: {
      maxCurrentAAt12V: 800,
      heatCapacityJPerC: 800,
      coolingWPerC: 5,
      tripC: 400,
      resetC: 150,
      warnC: 250,
    },
    ambientC: 25,
    engineTempC: 85,
  };
}

/** A parameter's range (its words for the editor: shared/param-labels.ts). */
export interface ParamBound {
  min: number;
  max: number;
  unit: string;
  /** Whole numbers only. */
  integer?: boolean;
}

type NumericKeys<T> = { [K in keyof T]: T[K] extends number ? K & string : never }[keyof T];
type Group = 'engine' | 'belt' | 'alternator' | 'regulator' | 'battery' | 'wiring' | 'loads' | 'pile';

/** Dotted paths of every numeric parameter, e.g. 'alternator.ratedCurrentA'. */
export type NumericParamPath =
  | { [G in Group]: `${G}.${NumericKeys<VehicleParams[G]>}` }[Group]
  | NumericKeys<VehicleParams>;

/** Sensible bounds for the scenario editor; the model stays stable inside them. */
export const VEHICLE_PARAM_BOUNDS: Readonly<Record<NumericParamPath, ParamBound>> = {
  'engine.idleRpm': { min: 500, max: 1200, unit: 'rpm', integer: true },
  'engine.maxHeldRpm': { min: 1500, max: 5000, unit: 'rpm', integer: true },
  'engine.lagTimeConstantS': { min: 0.05, max: 2, unit: 's' },
  'engine.crankRpm': { min: 80, max: 350, unit: 'rpm', integer: true },
  'engine.crankCurrentA': { min: 60, max: 400, unit: 'A' },
  'engine.minCrankVoltageV': { min: 6, max: 10.5, unit: 'V' },
  'engine.crankToStartS': { min: 0.2, max: 5, unit: 's' },
  'belt.pulleyRatio': { min: 1.3, max: 3.5, unit: ':1' },
  'belt.gripNm': { min: 2, max: 60, unit: 'N·m' },
  'belt.creep01': { min: 0.002, max: 0.2, unit: '' },
  'alternator.ratedCurrentA': { min: 60, max: 250, unit: 'A' },
  'alternator.ratedAltRpm': { min: 4000, max: 8000, unit: 'rpm', integer: true },
  'alternator.polePairs': { min: 4, max: 9, unit: 'pairs', integer: true },
  'alternator.cutInAltRpm': { min: 700, max: 1600, unit: 'rpm', integer: true },
  'alternator.statorResistanceOhmAt20C': { min: 0.005, max: 0.1, unit: 'Ω' },
  'alternator.synchronousInductanceH': { min: 20e-6, max: 400e-6, unit: 'H' },
  'alternator.fieldResistanceOhmAt20C': { min: 1.5, max: 6, unit: 'Ω' },
  'alternator.fieldInductanceH': { min: 0.05, max: 1, unit: 'H' },
  'alternator.brushResistanceOhm': { min: 0, max: 1e6, unit: 'Ω' },
  'alternator.fieldKneeCurrentA': { min: 1, max: 8, unit: 'A' },
  'alternator.diodeSaturationCurrentA': { min: 1e-12, max: 1e-5, unit: 'A' },
  'alternator.diodeEmissionCoefficient': { min: 1, max: 2.5, unit: '' },
  'alternator.diodeSeriesResistanceOhm': { min: 0, max: 0.01, unit: 'Ω' },
  'alternator.keyOffLeakageA': { min: 0, max: 5, unit: 'A' },
  'alternator.initialTempC': { min: -30, max: 130, unit: '°C' },
  'alternator.fullLoadTempRiseC': { min: 20, max: 120, unit: '°C' },
  'alternator.thermalTimeConstantS': { min: 60, max: 3600, unit: 's' },
  'alternator.efficiency01': { min: 0.3, max: 0.8, unit: '' },
  'regulator.setPointVAt25C': { min: 12.5, max: 16.5, unit: 'V' },
  'regulator.tempCoeffVPerC': { min: -0.03, max: 0, unit: 'V/°C' },
  'regulator.dutyFloor01': { min: 0, max: 1, unit: '' },
  'regulator.preExcitationDuty01': { min: 0, max: 0.5, unit: '' },
  'battery.cca': { min: 250, max: 1200, unit: 'A', integer: true },
  'battery.capacityAh': { min: 30, max: 120, unit: 'Ah' },
  'battery.ageYears': { min: 0, max: 12, unit: 'years' },
  'battery.initialSoc01': { min: 0, max: 1, unit: '' },
  'battery.tempC': { min: -30, max: 55, unit: '°C' },
  'battery.internalResistanceOhmAt25C': { min: 0.002, max: 0.05, unit: 'Ω' },
  'battery.initialSurfaceChargeV': { min: 0, max: 0.6, unit: 'V' },
  'battery.surfaceChargeTimeConstantS': { min: 5, max: 600, unit: 's' },
  'battery.sulfation01': { min: 0, max: 1, unit: '' },
  'wiring.bplusCableAwg': { min: 0, max: 10, unit: 'AWG', integer: true },
  'wiring.bplusCableLengthM': { min: 0.2, max: 4, unit: 'm' },
  'wiring.fusibleLinkAwg': { min: 4, max: 18, unit: 'AWG', integer: true },
  'wiring.fusibleLinkLengthM': { min: 0.05, max: 0.3, unit: 'm' },
  'wiring.fusibleLinkRatingA': { min: 30, max: 400, unit: 'A' },
  'wiring.fusibleLinkI2tA2s': { min: 1e3, max: 1e7, unit: 'A²s' },
  'wiring.batteryPosCableAwg': { min: 0, max: 8, unit: 'AWG', integer: true },
  'wiring.batteryPosCableLengthM': { min: 0.2, max: 5, unit: 'm' },
  'wiring.batteryNegCableAwg': { min: 0, max: 8, unit: 'AWG', integer: true },
  'wiring.batteryNegCableLengthM': { min: 0.2, max: 5, unit: 'm' },
  'wiring.groundStrapAwg': { min: 0, max: 10, unit: 'AWG', integer: true },
  'wiring.groundStrapLengthM': { min: 0.1, max: 2, unit: 'm' },
  'wiring.connectionResistanceOhm': { min: 0, max: 0.005, unit: 'Ω' },
  'wiring.bplusExtraOhm': { min: 0, max: 1, unit: 'Ω' },
  'wiring.groundExtraOhm': { min: 0, max: 1, unit: 'Ω' },
  'wiring.postClampPosOhm': { min: 0, max: 1, unit: 'Ω' },
  'wiring.postClampNegOhm': { min: 0, max: 1, unit: 'Ω' },
  'wiring.senseLineOhm': { min: 0, max: 1e6, unit: 'Ω' },
  'loads.baseElectronicsA': { min: 0, max: 40, unit: 'A' },
  'loads.keyOffAwakeA': { min: 0, max: 3, unit: 'A' },
  'loads.keyOffSleepA': { min: 0, max: 0.2, unit: 'A' },
  'loads.moduleSleepDelayS': { min: 5, max: 4500, unit: 's' },
  'loads.stuckDrawA': { min: 0, max: 5, unit: 'A' },
  'pile.maxCurrentAAt12V': { min: 200, max: 1500, unit: 'A' },
  'pile.heatCapacityJPerC': { min: 50, max: 5000, unit: 'J/°C' },
  'pile.coolingWPerC': { min: 0.5, max: 50, unit: 'W/°C' },
  'pile.tripC': { min: 150, max: 800, unit: '°C' },
  'pile.resetC': { min: 30, max: 400, unit: '°C' },
  'pile.warnC': { min: 50, max: 600, unit: '°C' },
  ambientC: { min: -30, max: 50, unit: '°C' },
  engineTempC: { min: -30, max: 120, unit: '°C' },
};

/** Copper resistance per metre at 20 C by AWG (HyperPhysics wire-gauge table, after Floyd). */
const COPPER_MILLIOHM_PER_M: Readonly<Record<number, number>> = {
  0: 0.323, 1: 0.407, 2: 0.513, 3: 0.647, 4: 0.815, 5: 1.028, 6: 1.296, 7: 1.634, 8: 2.061,
  9: 2.6, 10: 3.277, 11: 4.13, 12: 5.21, 13: 6.57, 14: 8.28, 15: 10.4, 16: 13.2, 17: 16.6, 18: 20.9,
};

/** Resistance of a copper conductor of the given gauge and length at 20 C. */
export function copperResistanceOhm(awg: number, lengthM: number): number {
  const g = Math.min(18, Math.max(0, Math.round(awg)));
  return ((COPPER_MILLIOHM_PER_M[g] ?? 0.815) / 1000) * lengthM;
}
