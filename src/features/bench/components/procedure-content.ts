/**
 * What the procedure panel says for each test: the steps on this bench, the
 * criterion the scenario grades by (from its pass rules) and the cautions.
 * The wording is ours; the limits come from the scenario.
 */
import { assertNever } from '../../../../sim/assert-never.ts';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import type { PassRules } from '../../../../shared/scenario.ts';
import { outputPassMarkA } from '../../../../shared/scenario.ts';

export interface Procedure {
  title: string;
  steps: string[];
  criterion: string;
  cautions: string[];
}

const CAUTION = {
  exhaust: 'Run the engine only with exhaust extraction connected or in a well-ventilated bay.',
  fan: 'Fan and belts: keep hands, hair, loose clothing, leads and tools clear; remove rings and watches. An electric fan can start even after the engine is off.',
  gases: 'Battery gases can explode: no sparks or flames near the battery; wear eye protection or a face shield.',
  frozen: 'Never load-test a frozen battery.',
  pile: 'The carbon pile gets hot: keep each loaded burst to 15 s or less and let it cool between bursts.',
  rated: 'Stop loading once the output reaches the rated value; holding more load than the unit can give drains the battery and can open the fusible link.',
  link: 'Fusible links are slow fuses: a sustained overload burns them open.',
  meter: 'The series ammeter has a 10 A fuse: never crank or switch on heavy loads with it fitted.',
} as const;

export const GENERAL_CAUTIONS: string[] = [CAUTION.exhaust, CAUTION.fan, CAUTION.gases, CAUTION.pile];

export const DEFER_NOTE =
  'These steps teach the method on this simulated car. On a real vehicle, follow the vehicle maker’s service information, your local codes and the practice of your licensed workshop.';

const v = (x: number, d = 1) => `${x.toFixed(d)} V`;

export function procedureFor(test: DiagnosticTest, rules: PassRules, ratedA: number, cca: number): Procedure {
  switch (test) {
    case 'battery-ocv':
      return {
        title: 'Battery state of charge (open-circuit voltage)',
        steps: [
          'Key off, every accessory off, pile at zero.',
          'Let any surface charge settle (skip ahead a minute or two after charging or cranking).',
          'Red lead on the battery positive post, black on the negative post — on the posts themselves, not the cable clamps.',
          'Record the voltage.',
        ],
        criterion: `A charged battery rests at ${v(rules.socChargedMinV, 2)} or more. Below that, charge it before load-testing.`,
        cautions: [CAUTION.gases],
      };
    case 'battery-load':
      return {
        title: 'Battery load test',
        steps: [
          'Engine off, key off; the battery must rest at or above the charged voltage first.',
          'Leads on the battery posts. The pile is already clipped across the posts.',
          `Turn the pile up until it draws about half the CCA (${Math.round(cca / 2)} A for this ${cca} CCA battery).`,
          'Hold for 15 s, read the voltage at the end of the 15 s, then turn the pile off at once.',
        ],
        criterion: `At the end of 15 s at half CCA the voltage stays at ${v(rules.batteryLoadMinV)} or more (at about 21 °C).`,
        cautions: [CAUTION.gases, CAUTION.frozen, CAUTION.pile],
      };
    case 'regulated-voltage':
      return {
        title: 'Regulated (no-load) charging voltage',
        steps: [
          'Leads on the battery posts.',
          'Start the engine; the assistant holds about 2,000 rpm.',
          'Accessories off, pile at zero. Wait for the voltage to settle.',
          'Record the voltage.',
        ],
        criterion: `Regulated voltage between ${v(rules.regulatedMinV)} and ${v(rules.regulatedMaxV)}.`,
        cautions: [CAUTION.exhaust, CAUTION.fan],
      };
    case 'output': {
      const mark = Math.round(outputPassMarkA(rules.output, ratedA));
      return {
        title: 'Output test under carbon-pile load',
        steps: [
          'Leads on the battery posts.',
          'Clamp on the B+ cable, arrow toward the battery; zero the clamp first with the engine off.',
          'Start the engine; the assistant holds 2,000 rpm.',
          `Turn the pile up quickly until the voltage falls to about ${v(rules.outputLoadedVoltageV)}.`,
          'Read the amps against the rating, record them, then turn the pile off at once.',
        ],
        criterion: `Output at about ${v(rules.outputLoadedVoltageV)}: at least ${mark} A against the ${ratedA} A rating (${
          rules.output.mode === 'percent-of-rating' ? `${rules.output.percent} % of rating` : `within ${rules.output.amps} A of rating`
        }).`,
        cautions: [CAUTION.exhaust, CAUTION.fan, CAUTION.pile, CAUTION.rated, CAUTION.link],
      };
    }
    case 'voltage-drop-positive':
      return {
        title: 'Voltage drop, positive side',
        steps: [
          'Red lead on the alternator B+ stud, black lead on the battery positive post.',
          'Start the engine, hold about 2,000 rpm and switch the headlamps and blower on: 30 A or more should show on the clamp on the B+ cable.',
          'Record the voltage: it is the loss in the B+ cable, fusible link and joints.',
        ],
        criterion: `Positive-side drop ${v(rules.maxDropPositiveV, 2)} or less under load.`,
        cautions: [CAUTION.exhaust, CAUTION.fan, CAUTION.pile],
      };
    case 'voltage-drop-ground':
      return {
        title: 'Voltage drop, ground side',
        steps: [
          'Red lead on the battery negative post, black lead on the alternator case (charging current flows back from the battery negative to the case, so the meter reads positive this way round).',
          'Start the engine, hold about 2,000 rpm, headlamps and blower on as for the positive side.',
          'Record the voltage: it is the loss in the mounting, ground strap and negative cable.',
        ],
        criterion: `Ground-side drop ${v(rules.maxDropGroundV, 2)} or less under load.`,
        cautions: [CAUTION.exhaust, CAUTION.fan, CAUTION.pile],
      };
    case 'ripple':
      return {
        title: 'AC ripple (diode) check',
        steps: [
          'Red lead on the battery positive post, black on the battery negative post.',
          'Start the engine, hold about 2,000 rpm, headlamps and blower on.',
          'Read the AC ripple and look at the trace: a healthy bridge gives a small, even six-pulse ripple.',
        ],
        criterion: `Ripple ${Math.round(rules.maxRippleVac * 1000)} mV AC or less at the battery posts.`,
        cautions: [CAUTION.exhaust, CAUTION.fan],
      };
    case 'key-off-draw':
      return {
        title: 'Key-off draw',
        steps: [
          'Key off, every accessory off, engine stopped.',
          'Fit the series ammeter at the battery negative.',
          'Wait for the modules to go to sleep (skip ahead several minutes).',
          'Record the draw. If it is high, remove the B+ lead at the alternator stud and see whether it falls.',
        ],
        criterion: `Key-off draw ${Math.round(rules.maxKeyOffDrawA * 1000)} mA or less once the modules sleep.`,
        cautions: [CAUTION.meter, CAUTION.gases],
      };
    case 'cranking':
      return {
        title: 'Cranking voltage',
        steps: ['Leads on the battery posts.', 'Turn the key to start and watch the lowest voltage while the engine cranks.', 'Record it.'],
        criterion: 'A charged, healthy battery stays well above 9.6 V while cranking a warm engine.',
        cautions: [CAUTION.exhaust, CAUTION.fan, CAUTION.gases],
      };
    default:
      return assertNever(test, 'test');
  }
}
