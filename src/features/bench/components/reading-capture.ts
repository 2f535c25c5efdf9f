/**
 * Turning the meters into a recorded reading: the quantity each test reads
 * (its set-up's, shared/test-setups.ts), its value exactly as the strip shows
 * it (shared/meter-display.ts), and words for where it was taken.
 */
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import type { Controls } from '../../../../sim/inputs.ts';
import type { Readings } from '../../../../sim/instruments.ts';
import type { ReadingQuantity } from '../../../../shared/api/attempts.ts';
import { dialPercent } from '../../../../shared/dial.ts';
import { meterShows, type MeterShown } from '../../../../shared/meter-display.ts';
import { TEST_SETUPS, type SetupStatus } from '../../../../shared/test-setups.ts';
import { CONDUCTOR_WORDS, POINT_WORDS } from '../../../components/schematic/layout.ts';

export const QUANTITY_LABELS: Record<ReadingQuantity, string> = {
  voltage: 'DC volts (voltmeter)',
  current: 'Amps (clamp)',
  ripple: 'AC ripple (voltmeter)',
  rpm: 'Engine speed',
  draw: 'Key-off draw (series ammeter)',
};

/** The quantity each test's reading is. */
export const TEST_QUANTITY: Record<DiagnosticTest, ReadingQuantity> = Object.fromEntries(
  Object.values(TEST_SETUPS).map((s) => [s.test, s.quantity]),
) as Record<DiagnosticTest, ReadingQuantity>;

/**
 * What a test's reading would record now: the meter's value as displayed, or
 * for the cranking test the lowest voltage shown during the last crank (the
 * meter's min hold). Null when that meter gives no reading.
 */
export function valueToRecord(test: DiagnosticTest, r: Readings, setup: SetupStatus): MeterShown | null {
  if (TEST_SETUPS[test].reading === 'crank-minimum') {
    return setup.crankMinV === null ? null : { value: setup.crankMinV, unit: 'V', text: setup.crankMinV.toFixed(2) };
  }
  return meterShows(TEST_QUANTITY[test], r);
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
  if (c.pileDial01 > 0) parts.push(`pile ${dialPercent(c.pileDial01)} %, ${Math.round(r.pileA)} A`);
  if (c.accessoriesOn.length) {
    const names = c.accessoriesOn.map((id) => accessories.find((a) => a.id === id)?.label.toLowerCase() ?? 'an accessory');
    parts.push(`${names.join(', ')} on`);
  }
  return parts.join('; ').slice(0, 200);
}

