/**
 * The words for each fault kind: the name the editor, the bench's results,
 * the live board and the grades show, one line for instructors on what is
 * wrong in the car, and what the severity means. The model's own claims of
 * each kind (the tests that reveal it, the severity the library uses) stay
 * with the fault's operations in sim/faults.ts.
 */
import type { FaultKind } from '../sim/faults.ts';

export interface FaultText {
  label: string;
  /** One line for instructors: what is wrong in the car. */
  description: string;
  /** What severity 0..1 means for this kind. */
  severityMeaning: string;
}

export const FAULT_TEXT: Readonly<Record<FaultKind, FaultText>> = {
  'fusible-link-open': {
    label: 'Fusible link open',
    description:
      'The link in the B+ cable has burnt open: the alternator still runs (the regulator excites its field) but no charge reaches the battery; the B+ stud sits high with heavy ripple.',
    severityMeaning: 'Not used (open is open).',
  },
  'diode-open': {
    label: 'Open rectifier diode',
    description: 'One positive diode no longer conducts: heavy ripple at the electrical frequency; output only a little down at speed.',
    severityMeaning: 'Not used (one diode, phase A positive).',
  },
  'diode-shorted': {
    label: 'Shorted rectifier diode',
    description: 'One positive diode conducts both ways: output far down, heavy ripple, and a key-off drain through the unit.',
    severityMeaning: 'Key-off leakage through the unit: 0.1 A at 0 to 2 A at 1.',
  },
  'stator-phase-open': {
    label: 'Open stator phase',
    description: 'One stator winding is broken: output well down, ripple at twice the electrical frequency.',
    severityMeaning: 'Not used.',
  },
  'field-open': {
    label: 'Open field (worn brushes)',
    description: 'Worn brushes or a broken rotor winding: little or no field current, so little or no output and no ripple.',
    severityMeaning: 'Brush resistance: 0 adds 2 ohm, 0.5 adds about 60 ohm, 1 is open.',
  },
  'regulator-set-high': {
    label: 'Regulator set high',
    description: 'The regulator holds too high a voltage: overcharging, a gassing battery, bulbs failing.',
    severityMeaning: 'Set point raised by 0.3 V at 0 to 2.0 V at 1.',
  },
  'regulator-set-low': {
    label: 'Regulator set low',
    description: 'The regulator holds too low a voltage: the battery is never fully charged.',
    severityMeaning: 'Set point lowered by 0.3 V at 0 to 1.5 V at 1.',
  },
  'regulator-full-field': {
    label: 'Regulator stuck at full field',
    description:
      'The field driver is shorted on: the voltage climbs past 16 V with light loads and the battery gasses; held there long enough, the unit’s full output burns the fusible link open.',
    severityMeaning: 'Lowest field duty: 0.5 at 0 to 1 (full field) at 1.',
  },
  'belt-slip': {
    label: 'Belt slipping',
    description:
      'A glazed, stretched or loose belt: it creeps more under load and squeals, and once the grip is below the torque the loaded unit asks, the output falls far short while the tach reads normal.',
    severityMeaning: 'Grip reduced by 90 % x severity and creep raised 1 + 14 x severity times; the loaded output test falls short from about 0.9 on a typical car, and the belt squeals under heavy loads at idle from about 0.5.',
  },
  'bplus-high-resistance': {
    label: 'High resistance on the B+ side',
    description: 'A corroded B+ terminal or damaged charging cable: a large positive-side voltage drop under load.',
    severityMeaning: 'Extra resistance: 50 milliohm times severity (0.2 is 0.01 ohm).',
  },
  'ground-high-resistance': {
    label: 'High resistance on the ground side',
    description:
      'A corroded alternator mounting or case ground: a large ground-side drop under load, less field current (the field returns through the case) and an undercharged battery.',
    severityMeaning: 'Extra resistance between case and engine: 50 milliohm times severity.',
  },
  'battery-weak': {
    label: 'Weak (sulfated) battery',
    description:
      'A sulfated battery: much higher internal resistance, less capacity and acid locked in the plates, so it rests low even when charged, fails the load test and cranks poorly.',
    severityMeaning: 'Internal resistance times 2.8 + 4 x severity (fails the load test at any severity); capacity times 1 - 0.6 x severity; sulfation 0.2 + 0.6 x severity.',
  },
  'key-off-draw': {
    label: 'Excessive key-off draw',
    description: 'An accessory stays on with the key off and drains the battery overnight.',
    severityMeaning: 'Stuck load: 0.05 A at 0 to 1 A (a lamp) at 1.',
  },
  'wrong-rating': {
    label: 'Wrong alternator rating fitted',
    description: 'A lower-rated unit was fitted: it works but cannot reach the car’s specified output.',
    severityMeaning: 'Fitted unit rated 1 - 0.5 x severity of the specified rating (severity 0.67: a 100 A unit in a 150 A car).',
  },
  'post-corroded': {
    label: 'Corroded battery post',
    description:
      'Corrosion between the positive post and its clamp: a drop across the post connection under load, slow cranking, and from about 0.3 no start at all (the post itself still reads a good battery).',
    severityMeaning: 'Post-to-clamp resistance: 100 milliohm times severity.',
  },
};
