/**
 * Golden runs: a self-consistency check, not a check against the outside
 * world. Each digest below was recorded from the model before any work on its
 * speed; the runs and what goes into a digest are in golden.ts. Work that is
 * meant only to make the model faster must leave every digest as it is, bit
 * for bit: the bench and the server's grading re-run the same model and must
 * agree. A change meant to alter the model's behaviour re-records the digests
 * and their checkpoints (`npx tsx tests/sim/record-golden.ts`, which prints
 * the digests that changed) and says why in its commit.
 *
 * When a digest differs, the failure says where the run first departs: the
 * first 10 s of sim time whose checkpoint tags differ and the state fields
 * that differ in it (golden-locate.ts, golden-checkpoints.json).
 */
import { describe, expect, it } from 'vitest';
import * as detMath from '../../sim/det-math';
import { digestMathParts, digestOtherSteps, digestRun, goldenRuns, OTHER_STEP_LENGTHS_MS, OTHER_STEPS_NAME, OTHER_STEPS_RUN_MS } from './golden';
import { CHECKPOINT_EVERY_MS, locateDifference, readCheckpoints, type RunCheckpoints } from './golden-locate';

/** Where each run stood at each checkpoint, recorded with the digests below. */
const CHECKPOINTS = readCheckpoints(new URL('./golden-checkpoints.json', import.meta.url));
if (CHECKPOINTS.everyMs !== CHECKPOINT_EVERY_MS) throw new Error(`golden-checkpoints.json holds windows of ${CHECKPOINTS.everyMs} ms, not ${CHECKPOINT_EVERY_MS} ms: re-record it`);

const RECORD = 'npx tsx tests/sim/record-golden.ts';
const finer = (name: string) => `To the step: record the earlier model's checkpoints of this run every 10 ms (${RECORD} --every-ms 10 --only "${name}" --to <file>, in a checkout of it) and compare the model here with them (${RECORD} --compare <file>)`;

/**
 * Checks a run's digest; when it differs, the message names where the run
 * first departs. With the digest equal, the checkpoints must be the ones
 * recorded with it (else they were not re-recorded together).
 */
function expectAsRecorded(name: string, now: { digest: string; checkpoints: RunCheckpoints }, note = ''): void {
  const recorded = CHECKPOINTS.runs[name];
  if (now.digest !== GOLDEN[name]) {
    const where = locateDifference(recorded, now.checkpoints) ?? 'the checkpoints agree: the difference is in what only the digest takes';
    expect.fail(`the digest of "${name}" differs from the recorded one: ${where}${note}. ${finer(name)}`);
  }
  expect(JSON.stringify(now.checkpoints) === JSON.stringify(recorded), `the checkpoints of "${name}" are not the ones recorded with its digest: re-record both with ${RECORD}`).toBe(true);
}

/** The elementary functions in det-math.ts over golden.ts's inputs (recorded before their speed work too). */
const GOLDEN_MATH = 'd83c4102d2f463fdbcae5724910c0112002fe75904ca5f693800063e0e4fd205';

const GOLDEN: Readonly<Record<string, string>> = {
  'bench attempt, 10 minutes': '8a12ec103bb8b1c021ca8fa89dd20c2c199ec65bd4da5e33ea8080b181f60af8',
  'bench attempt, 30 minutes, grading warm-up car': '27a632b581fda52f74c9611b70c6b75012788a64dc44df015d1ad74b721fcbbb',
  'scenario battery-weak-marrowby-dune.json, full round': 'cf39edd829550dbcf3088b3db17d8d51392ab1e6e399d5f31f788bb412c84d28',
  'scenario belt-slip-harlan-ridge.json, full round': 'ba34bc4e3606c5d8af19138eddb209341ea2d8a606056e6c362d39a02f25ecd7',
  'scenario bplus-high-resistance-ambry-hollow.json, full round': 'f5361b8fce174d7615554d2b3bffed90979c6df93042e08a5b8a921d02886c4f',
  'scenario diode-open-tarrow-flats.json, full round': 'd9137f7a6ed28e775441889c4aa4f18d44b8f8e8f7bcee02b2fbff72296962b9',
  'scenario diode-shorted-pellmont-wren.json, full round': 'c00dbda054bb75f79843bc698a2701bd6d41bc379f6c7947c6462a8cde45ed47',
  'scenario field-open-orland-fen.json, full round': 'b2c6410c1c46fc3c312614031c31d5c0923e710644375c0b7162e39b2bdaf112',
  'scenario fusible-link-open-westmark-drover.json, full round': '5a8ad48248e980b689106d9e3bcb8b98b3a2a81043cd6473bcb20a7805cc4064',
  'scenario ground-high-resistance-silt-creek.json, full round': '5bd17b77836d2583899b129e4a9bf017d53074681014d6e6d8b22491ac0e1e28',
  'scenario healthy-control-corvane-linden.json, full round': 'd60577933f18ae8164260832c395ad290f7f70d4d15eb5ed7ff4f95c2336ba9a',
  'scenario intermittent-bplus-pike-hollow.json, full round': '816b0be0084f38e3b49d1a1f636d8b8595ab5dbaf3206bc201af030d38e79280',
  'scenario key-off-draw-ellery-cross.json, full round': '3b79e67593ec9444e5f8d9b4ed784f6e16060c265d32aa11eca228c84e3de421',
  'scenario post-corroded-fairlow-tern.json, full round': 'b9922c086ba7244a0d4957d21be510024ada7c59bb90d169f69985ac0c5a6ef8',
  'scenario regulator-full-field-brackwater-mesa.json, full round': '3bdb9376033174245f1fde164f5a8501b506d2922b188c32ff78799af5ab7d1f',
  'scenario regulator-set-high-redcourt-alder.json, full round': '3b3a771526c2536d23d59534f0130c0756c595668577719d0a01db0ff421be7b',
  'scenario regulator-set-low-quillon-vale.json, full round': '852a06681a9a25332452385cd0d113c7218a1363a5d27866d41df588c9e7dd25',
  'scenario stator-phase-open-kestrel-bay.json, full round': '15c97566c61809ae0c0b691762f052796807e61297cb208d8da04324cdba86c8',
  'scenario weak-battery-and-draw-gannet-sound.json, full round': '7116215cb05b94009bf9f207e5adc3d6608ecba33f4f8546684ff94b6f13f71e',
  'scenario wrong-rating-dunmore-reach.json, full round': '9220e0b6fd9b0df5114464d3a9c82b347f58ed011ab66c22f72925bc0b8490ff',
  'default car, fusible-link-open injected live, intermittent': '3c8bfeece57ce222150811ef5acd6b90dec54507bbfffff72961df6165123ff5',
  'default car, diode-open injected live': 'a9c387187c12a03e78abd45bacd1df53972db5c28445d67db7d5d2beb54eea6f',
  'default car, diode-shorted injected live': 'fc8172f6b186fc88d8f0cf005fa4418af066d797f7009515a80f2890903f8e32',
  'default car, stator-phase-open injected live, intermittent': 'a5305bcc6b7dacd0decf9e83bbb97a83e8a86fa17ee675a6f78e0c99ad51c1c1',
  'default car, field-open injected live': '40dd65fdbc9543a5298c58aed739f0ca1de06cfe07c0cda27ba4101fab5b8311',
  'default car, regulator-set-high injected live': '5c4d909909dd35a899d203dcba76e1eb2ed0e3461c97c28d6f8a8e69bca443b1',
  'default car, regulator-set-low injected live, intermittent': '4cbfb2405edfa389b2a66d21f7ba9de7c6888fc9319bfac0908a16342937b175',
  'default car, regulator-full-field injected live': '8bd9d75e67a71c81fa9b86aa19c57559d204625d1ef8fb1d753cfe8d0ce6c4c7',
  'default car, belt-slip injected live': '31e6678b9bec86e15bda60f4cec5f2275b9c004f226edcef5d0222f81c8f81b2',
  'default car, bplus-high-resistance injected live, intermittent': '0d2f7f43827e291e691b4c87b22ee4451034186985d3ea548a7612898ee4b2fc',
  'default car, ground-high-resistance injected live': '9bff0d8d49899eca4d2d2d67a4ef957df47afeee1aafb75c1aac62798a38cd98',
  'default car, battery-weak injected live': '99cdb17da68e603ed236c56292300eda875be5d812c098acc23a8c984aed7976',
  'default car, key-off-draw injected live, intermittent': '4007d71cb78024ec10eb5f7a00b02414b6510ce86e470eaa911450b668b6b8cc',
  'default car, wrong-rating injected live': '44967cbf0535d842643603abe10ca5bc10347cda047387440066a9691870bad3',
  'default car, post-corroded injected live': 'adeaf2fb3046f67aa3e2c5be4bced276be0b6076320a64cb0dcbca37fe8aa658',
  'three intermittent faults at once, one cleared and re-injected': '3f46bad91c52f05d3b0c020703e0d98f8f93ea6b3b403d0a9e1ccbf2a9d78ecf',
  'a fusible link blown by a heavy load': 'ad9c5d9c2795505b58b9e2215071356e4d548968bcbdb2eb875019b9714d6ce1',
  'the pile overheats, trips, cools and resets': 'b7d2b7146abd9fc4fbce03f5eb4150a961b97723ac764615de65278fa21813e9',
  'the series ammeter fuse blows with the key on': 'c5129b7ad021e09e127f2422edf8b750edb5809263e1f9c06fd8098f300c2981',
  'a flat weak battery stalls the crank, then a second try': '75dd9e6924bf877fdc5db89bc1287a8f2553c6f6afb3365e9d278941cde4e5e4',
  'a slipping belt under heavy load and rpm changes': '223aab9d1e8a566837111a5e62387dd511b13b0386c621760ea532f3cffdb554',
  'a regulator sensing B+': '695533ad469367d93665a996a3c9c66ce748ef78a4102adbaa688f0a1d8008e6',
  'an open sense line': '08051c1079a327c0b40587e3e5d767a051b9a6c93aaad5d0e02383e2818a6f54',
  'full field with B+ removed at speed: the overvoltage cut-out': 'fdb664b8ab4dc79f0d784634c03d9e3021f9bb8290d5cfdb4af874eb310ae20d',
  'more than thirty faults (the uncached path)': '2ac943659c9e49561d59104d6854b31c94563bb2406f48b529ee0800248de0e7',
  'key off for ten minutes: modules sleep, surface charge settles': 'f461c521629fcc406188ffb3d5ee7d2d83f9e8fce3fa0a160bf54ea97973c46d',
  'random attempt 0': '7da0520ba13df346d290cd94f0e1d77d8b39031cab052c1e347233ccd7451fb7',
  'random attempt 1': '7ba913bc7bf70859d2726005cbe973890984009c57c39e7b06b7cc2c3e2f83e9',
  'random attempt 2': '60aa754a695d181f187eb9b7cb573afd3bffb60c6ba36a778b2b1bb1606b0a43',
  'random attempt 3': '84d024a050bf6570c4126399ddba575343ef985f1fc94c49ed3df098f2acd77e',
  'random attempt 4': '64825c46d42a979e83b5a22b76bc40f7116a60f25c9c4573b01761047fde3ca5',
  'random attempt 5': '0d981c772e579aee4e244f2f9d89b825d50b47859c2919e69891a2c72bf4f9c2',
  'random attempt 6': '57d2d774c9d7e120545025cb92bcd5dd927523cbb3466674694e8064c91eb4da',
  'random attempt 7': '2811bd2f6a75e02df810e950c1428b2331706564b8220b208e3eea4cdf1b0d1c',
  'random attempt 8': 'cbcf8c4bec0dbea4be6eec7277c3bb870e30150354df73857c12f8b78a6eb449',
  'random attempt 9': '98a31d95474bca923ca87672556f0428e298b4d3e60fb56cc190857c6f2bab68',
  'random attempt 10': '7a96ac683ef65ebe5a2fba7e36c8336862b2567c7e453fe003639d5f7c484629',
  'random attempt 11': '600c10e092d79acd3229e9a88486cda9ef02147a2ec114eea657c476fbaceaf7',
  'bare step at 5, 20, 10 and 1 ms': '340f0589f70c068611c24dc5774ed193e4596eb80bccdc165212df976c79e5c6',
};

describe('golden runs (self-consistency: digests recorded from the model before its speed work)', () => {
  const runs = goldenRuns();

  it('has a recorded digest for every run and a run for every digest, with checkpoints for each', () => {
    expect([...runs.map((r) => r.name), OTHER_STEPS_NAME].sort()).toEqual(Object.keys(GOLDEN).sort());
    expect(Object.keys(CHECKPOINTS.runs).sort()).toEqual(Object.keys(GOLDEN).sort());
  });

  for (const run of runs) {
    it(run.name, () => {
      const result = digestRun(run);
      expectAsRecorded(run.name, result);
      // Stepping one step at a time ends where runAttempt does, and seeks from stored snapshots agree.
      expect(result.consistent).toBe(true);
      if (run.reaches) expect(run.reaches(result.reached), `the run no longer reaches what it is for: ${JSON.stringify(result.reached)}`).toBe(true);
    });
  }

  it('the elementary functions, bit for bit', () => {
    const now = digestMathParts(detMath);
    const differ = Object.keys(now.byFunction).filter((name) => now.byFunction[name] !== CHECKPOINTS.math[name]);
    expect(now.digest, `the elementary functions differ from the recorded ones: ${differ.join(', ') || 'none by its own tag'}`).toBe(GOLDEN_MATH);
    expect(now.byFunction, `the functions' tags are not the ones recorded with the digest: re-record with ${RECORD}`).toEqual(CHECKPOINTS.math);
  });

  it(OTHER_STEPS_NAME, () => {
    const order = OTHER_STEP_LENGTHS_MS.map((dt, k) => `${dt} ms from ${(k * OTHER_STEPS_RUN_MS) / 1000} s`).join(', ');
    expectAsRecorded(OTHER_STEPS_NAME, digestOtherSteps(), ` (the step lengths run one after another on the checkpoints' clock: ${order})`);
  });
});
