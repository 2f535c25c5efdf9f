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
  'bench attempt, 10 minutes': 'c02989d13c2904e9f340a8bbdff4510694a44ff18de8b91d11dacb26b03109bf',
  'bench attempt, 30 minutes, grading warm-up car': 'a7af1548aab82308d4c36f507772c00d2247413fc868dc7a490cc99f7e76e039',
  'scenario battery-weak-marrowby-dune.json, full round': '08d295949f9f34b66f7664d2c4d751abaa25c1df13253b5c2239b086008ce0d8',
  'scenario belt-slip-harlan-ridge.json, full round': '5ccc1bbe67c0fc95ad338728719e7b74e9092229f67d36040f3c5368f65ff7b2',
  'scenario bplus-high-resistance-ambry-hollow.json, full round': 'd2b2bb81c543937b6430f5558b7dd7c3a9c7d43363ffa36c3e699b2540662cb8',
  'scenario diode-open-tarrow-flats.json, full round': '869dea62437fd8465d6e17f128e4d44457720d76b64f6303ce4e1d8ac7badad8',
  'scenario diode-shorted-pellmont-wren.json, full round': '6856a8ea68b2a96d4f3c558e38f940818e9107df213148aef0c0f29f698fe703',
  'scenario field-open-orland-fen.json, full round': '1c975be023fae04917b21947bab04508ca83276a5cfcc40ad2e67b622d0cb3aa',
  'scenario fusible-link-open-westmark-drover.json, full round': '577aedc0a53be07f0186d584669f911ffc78fe5979448cadfce8727adf8a9474',
  'scenario ground-high-resistance-silt-creek.json, full round': '319ee068cd6713684ce66d2ad29f9fa42ed424d51260564121677d8dc91c8fe2',
  'scenario healthy-control-corvane-linden.json, full round': '49cc3d5d367f1ddaffca3fbe7fc7ac028e79c7f492111ac5d575500cf0bfff68',
  'scenario intermittent-bplus-pike-hollow.json, full round': 'b02532069d6e0b3b24f4205649883c8bc583f9217b4c38bfcc8ad4ff90e0e6f8',
  'scenario key-off-draw-ellery-cross.json, full round': 'f5f756590e95c8086caf76e10fe6bc15b6dfc0e7d1cd66055fb17d4bed2ebc86',
  'scenario post-corroded-fairlow-tern.json, full round': '827bb20cd83790b17a37c01f0c96a74cc4705463f8b8957dcd8357ed665b7d03',
  'scenario regulator-full-field-brackwater-mesa.json, full round': 'ac567db81adfc6f7c9fd4ccd4f1e5a94da51670df3b621e9a7d491c6a6dd7ede',
  'scenario regulator-set-high-redcourt-alder.json, full round': '2dad14277af3bb67a913fabd98b1da581f1db4b1f01c4d716ebf6514c7c85d3b',
  'scenario regulator-set-low-quillon-vale.json, full round': '61852e6b136db71f3b7f5e8f6be1f27bb2e6010e404eb3126904f3eea601b689',
  'scenario stator-phase-open-kestrel-bay.json, full round': '737751001928d839b45798c2e232abe82bd63d189618182245e21ca0f7aae9b4',
  'scenario weak-battery-and-draw-gannet-sound.json, full round': '326db7283d567c8a78dade1674e1afab7834530785d03ade0b830403bae0486d',
  'scenario wrong-rating-dunmore-reach.json, full round': '2bd81e21e4d27c41c6648631560e7dd7ce111820f767cacb257a1245f2d54b4f',
  'default car, fusible-link-open injected live, intermittent': '07ad273167098f1ba01b543bfba511650fbe21fc8d4fdff438ebd18c26cef8cd',
  'default car, diode-open injected live': 'f836a91b59a480ffc0b53c68c11a484414ebb6910a7476154c6d2ab7d16d936b',
  'default car, diode-shorted injected live': '37fcb0ec8465e9cae5fd7dc91e729317e106f3eacb3c00310d0ea27edfedebb2',
  'default car, stator-phase-open injected live, intermittent': '1f88a046a4076465fefc834d53375e88aa0c1f5a1ccc3f134f2a69bbcb88c233',
  'default car, field-open injected live': 'd316257928c197a6e554704fe35afbdb7a55a045b8ab890b37a604fc7dcc2c83',
  'default car, regulator-set-high injected live': '9c2e26de303af6f19820e42cfbc995dceeb05d8efee1b712724777d16aef9d47',
  'default car, regulator-set-low injected live, intermittent': '7690c0504ade64dd0775514b7c1bd43025d71d1d340eb6cb5012e5d62da90284',
  'default car, regulator-full-field injected live': 'd8ae6c3458f18cb03915e8091d1cb71b3a93e7e760d5bbf22362b3ded70acab1',
  'default car, belt-slip injected live': '270e5bf411b6e0b675839fede6e7ac530490a060ab15a7192063a6e0142af58a',
  'default car, bplus-high-resistance injected live, intermittent': 'eb803606ee6cb2c141bfb5058168a531ff6898a8970d9ea04fa7809ad2f9a5fe',
  'default car, ground-high-resistance injected live': '22528209d51010fb284be5749f333ef4ec720926c950499e3913339cf677dc3b',
  'default car, battery-weak injected live': '911d3815f051e307c6d449c0ba248d7650ddb62700321c5eab8a41f4ff49c360',
  'default car, key-off-draw injected live, intermittent': '9d090a0746ad668e950dedd6962c95dcd08fd5ff69dfc8e737b61bea1f1cef8b',
  'default car, wrong-rating injected live': '519c53ce8b5c114fc5a0bd57b7abbcd924f53b2ed8fe5eb27e727049d2c6433b',
  'default car, post-corroded injected live': '00869804d2b933d0466ac9c5768decd902c2184b4528e7c1839a560e4a2749e6',
  'three intermittent faults at once, one cleared and re-injected': 'f59da01e7f027c7c713ad0fcbf33ff91edca1b4b388f4ab874941e96fdad8830',
  'a fusible link blown by a heavy load': '18e2676c3cec1f94f186c434e9da79c02d5387586f814118a38689dde79f2c44',
  'the pile overheats, trips, cools and resets': '210b1c03d5df9dd7bdb6223b018c350159fad82fcd206c925c1a5279791448f3',
  'the series ammeter fuse blows with the key on': '9dca5bef321d1f0a021f282fae0722e37e67572c8980e337d5287cae64b39ca2',
  'a flat weak battery stalls the crank, then a second try': '91575337705c5cf77489054ae6b6c938353d7f8db52d3cb340dc912b1944b516',
  'a slipping belt under heavy load and rpm changes': '86e9711287cc0091b65a5223da22474db020e6f756c176be6f736615906a5860',
  'a regulator sensing B+': '695533ad469367d93665a996a3c9c66ce748ef78a4102adbaa688f0a1d8008e6',
  'an open sense line': '08051c1079a327c0b40587e3e5d767a051b9a6c93aaad5d0e02383e2818a6f54',
  'full field with B+ removed at speed: the overvoltage cut-out': '3f936004184aeec13d1a9667b12cf2de4e78a6509763c61dabcf7a4bc0e4be95',
  'more than thirty faults (the uncached path)': '55f9d0b135470c333c2f8ae4eefd91534cd4ed43b17fbac9754656ba23780cd4',
  'key off for ten minutes: modules sleep, surface charge settles': '4378abb7d5924455f5742a4d52778dce5d3064af861b79bdf77edfb16380d629',
  'random attempt 0': '435b278811145887d83fb71fd59d042736181d67ecf0e99e873606c67eb3d6e3',
  'random attempt 1': 'e1c67d9280c0b25b3b9263689ef372635b72c05dafd22801a76ecee33abf4443',
  'random attempt 2': 'ec6adf912e040ba73cf97f6c5cd9d416a53609f78240e8796d64a3d231c3059b',
  'random attempt 3': '3578e2f6701cf2a572f1f705cfed2da180dcce82645a946d996556f6d1c32d1c',
  'random attempt 4': '58fa09568da0d6672bf651331e9f60e6f8c493877ed147124c0cae9ad09fc74d',
  'random attempt 5': 'eecdfff42c798b3e0e6b018dc82f0cbd0f6c8228315b67a9fc43d535ab9fadde',
  'random attempt 6': '8647c2d7c185dc65a86f8ed96e8bcb0e39c3b63af6afd42f59672121275005f3',
  'random attempt 7': '39d6d0f5fc46baa3970aa468b76f4710cd8648f096df3e78924d68bd24468289',
  'random attempt 8': '8ae1f489cc13b85f9c623e071625895189c99024bfbca57b897309996bc1e1cc',
  'random attempt 9': 'fff91d6ad1b16f36035658024aa4026f36a9a8eaad53797b8c55143d4dfa9684',
  'random attempt 10': '0fd61bbda35114dd268104d6d3d14e646bd0cef44fb5de90915e51654a703794',
  'random attempt 11': '2734e76a7ab41b1501415a09c3b41ad5e248e0e9038aa7973adea0dbc9c99bfc',
  'bare step at 5, 20, 10 and 1 ms': '79c5a63f05943224b355adb0b0546af3aefbe9d5eed91b9190258b1f95541f9c',
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
