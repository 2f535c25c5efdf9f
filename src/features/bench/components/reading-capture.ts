/**
 * Turning the meters into a recorded reading: the quantity a test usually
 * records, its value as the strip shows it, and words for where it was taken.
 */
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import type { Controls } from '../../../../sim/inputs.ts';
import type { Readings } from '../../../../sim/instruments.ts';
import type { ReadingQuantity, RecordedReading } from '../../../../shared/api/attempts.ts';
import { CONDUCTOR_WORDS, POINT_WORDS } from '../../../components/schematic/layout.ts';

export const QUANTITY_LABELS: Record<ReadingQuantity, string> = {
  voltage: 'DC volts (voltmeter)',
  current: 'Amps (clamp)',
  ripple: 'AC ripple (voltmeter)',
  rpm: 'Engine speed',
  draw: 'Key-off draw (series ammeter)',
};

export const DEFAULT_QUANTITY: Record<DiagnosticTest, ReadingQuantity> = {
  'battery-ocv': 'voltage',
  'battery-load': 'voltage',
  'regulated-voltage': 'voltage',
  output: 'current',
  'voltage-drop-positive': 'voltage',
  'voltage-drop-ground': 'voltage',
  ripple: 'ripple',
  'key-off-draw': 'draw',
  cranking: 'voltage',
};

const round = (x: number, decimals: number) => Number(x.toFixed(decimals));

/** The meter's value for a quantity, rounded as displayed, or null when that meter gives no reading. */
export function meterValue(quantity: ReadingQuantity, r: Readings): { value: number; unit: RecordedReading['unit'] } | null {
  switch (quantity) {
    case 'voltage':
      return r.voltmeterV === null ? null : { value: round(r.voltmeterV, 2), unit: 'V' };
    case 'current':
      return r.clampA === null ? null : { value: round(r.clampA, Math.abs(r.clampA) < 100 ? 1 : 0), unit: 'A' };
    case 'ripple':
      return r.rippleVac === null ? null : { value: Math.round(r.rippleVac * 1000), unit: 'mV' };
    case 'rpm':
      return { value: Math.round(r.tachRpm / 10) * 10, unit: 'rpm' };
    case 'draw':
      return r.ammeterA === null ? null : { value: round(r.ammeterA * 1000, 1), unit: 'mA' };
  }
}

/** Words for the hook-up at the moment of a reading (names, never the model's codes). */
export function describeSetup(c: Controls, r: Readings, accessories: readonly { id: string; label: string }[] = []): string {
  const parts: string[] = [];
  if (c.leads.red || c.leads.black) {
    parts.push(`red on ${c.leads.red ? POINT_WORDS[c.leads.red] : 'nothing'}, black on ${c.leads.black ? POINT_WORDS[c.leads.black] : 'nothing'}`);
  }
  if (c.clamp.conductor) parts.push(`clamp on ${CONDUCTOR_WORDS[c.clamp.conductor]} (${c.clamp.arrow === 'toward-battery' ? 'arrow toward battery' : 'arrow toward alternator'})`);
  if (c.ammeterInSeries) parts.push('series ammeter at battery −');
  parts.push(r.engine === 'running' ? `engine ${Math.round(r.tachRpm / 10) * 10} rpm` : `engine ${r.engine}, key ${c.key}`);
  if (c.pileDial01 > 0) parts.push(`pile ${Math.round(c.pileDial01 * 100)} %, ${Math.round(r.pileA)} A`);
  if (c.accessoriesOn.length) {
    const names = c.accessoriesOn.map((id) => accessories.find((a) => a.id === id)?.label.toLowerCase() ?? 'an accessory');
    parts.push(`${names.join(', ')} on`);
  }
  return parts.join('; ').slice(0, 200);
}

/** A recorded reading plus what the bench keeps for its own plot. */
export interface LocalReading extends RecordedReading {
  /** Engine speed at the moment (for the output curve). */
  tachRpm: number;
}

export function toRecorded(r: LocalReading): RecordedReading {
  return { id: r.id, test: r.test, quantity: r.quantity, value: r.value, unit: r.unit, atMs: r.atMs, where: r.where };
}
