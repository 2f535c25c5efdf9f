/**
 * The alternator, rectifier and battery at one operating point, as a plain
 * numeric circuit. The model builds one of these from a vehicle's parameters
 * and its state; the reference tests hand the very same object to a SPICE
 * engine, so both sides solve one circuit from one parameter object.
 *
 * Units are in the names: V, A, Ohm, H, Hz.
 *
 * Topology: three stator phases in star (wye), each an EMF of peak
 * `phaseEmfPeakV` at `electricalHz` (phases 120 degrees apart) behind the
 * phase resistance and the synchronous inductance. A six-diode bridge: diodes
 * 0, 1, 2 from phases A, B, C to B+ (positive side); diodes 3, 4, 5 from the
 * alternator case (ground) to phases A, B, C (negative side). B+ reaches the
 * battery positive post through `bplusResistanceOhm`; the alternator case
 * reaches the battery negative post through `groundResistanceOhm`. The load
 * sits across the battery posts.
 */

export interface DiodeModel {
  /** Shockley saturation current. */
  saturationCurrentA: number;
  /** Emission coefficient (ideality factor). */
  emissionCoefficient: number;
  /** Bulk series resistance of one diode. */
  seriesResistanceOhm: number;
}

export interface RectifierCircuit {
  electricalHz: number;
  /** Line-to-neutral EMF, peak. */
  phaseEmfPeakV: number;
  statorResistanceOhm: number;
  synchronousInductanceH: number;
  diode: DiodeModel;
  /** Indices 0..5 as described above. */
  openDiodes: readonly number[];
  shortedDiodes: readonly number[];
  /** Indices 0..2 (A, B, C). */
  openPhases: readonly number[];
  /** Null: no battery (a resistive load only). */
  battery: { ocvV: number; internalResistanceOhm: number } | null;
  bplusResistanceOhm: number;
  groundResistanceOhm: number;
  /** Across the battery posts; Infinity for none. */
  loadResistanceOhm: number;
}

/** What either solver reports for a circuit in periodic steady state. */
export interface RectifierSolution {
  /** Mean current leaving the B+ stud toward the battery and load. */
  meanOutputCurrentA: number;
  /** Mean voltage of B+ against the alternator case. */
  meanBplusV: number;
  /** Mean voltage across the battery posts. */
  meanBatteryV: number;
  /** RMS of the AC part of the battery-post voltage. */
  rippleRmsV: number;
  /** Frequency of the largest AC component of the battery-post voltage. */
  dominantRippleHz: number;
}
