/**
 * Golden runs: a self-consistency check, not a check against the outside
 * world. Each digest below was recorded from the model before any work on its
 * speed; the runs and what goes into a digest are in golden.ts. Work that is
 * meant only to make the model faster must leave every digest as it is, bit
 * for bit: the bench and the server's grading re-run the same model and must
 * agree. A change meant to alter the model's behaviour re-records the digests
 * (print `goldenDigests()` from golden.ts) and says why in its commit.
 */
import { describe, expect, it } from 'vitest';
import * as detMath from '../../sim/det-math';
import { digestMath, digestOtherSteps, digestRun, goldenRuns } from './golden';

/** The elementary functions in det-math.ts over golden.ts's inputs (recorded before their speed work too). */
const GOLDEN_MATH = 'd83c4102d2f463fdbcae5724910c0112002fe75904ca5f693800063e0e4fd205';

const GOLDEN: Readonly<Record<string, string>> = {
  'bench attempt, 10 minutes': '87fe147dde7a4fc4696f51177c5a52637038fb0a1e01886d993344c6ec1cc759',
  'bench attempt, 30 minutes, grading warm-up car': 'd90f0b4255cf17eea707d582f66f0be107f85f991ee23c414d54b5f585eb7a07',
  'scenario battery-weak-marrowby-dune.json, full round': 'e5ba3e742c94334107c7631ff1c2d9bde1d2125afe15ec0688aaf35cae3c8832',
  'scenario belt-slip-harlan-ridge.json, full round': '178d618e8c3fa6643b793550963943034a8be806d9fb0f4a57ab5ac0989e6eb7',
  'scenario bplus-high-resistance-ambry-hollow.json, full round': '32056b383ccc5de2a18a5729ce8ffdf4e6d8175f4d20ff7988981ae85b5c7f02',
  'scenario diode-open-tarrow-flats.json, full round': '2480f75c7cbd505cce95f0426ad22c779ed82bbd482bbe140d43e47c79e9692f',
  'scenario diode-shorted-pellmont-wren.json, full round': '22f9ee0b1a0935d37a604c20016a8f6edb495eabc211911e517c9d3262b10154',
  'scenario field-open-orland-fen.json, full round': 'da9cb0f5530e88e961c00b6b84a072db19f5ba8e1016e41b1aa734abe606617f',
  'scenario fusible-link-open-westmark-drover.json, full round': '720fe3304efc3b939855bc56cde28b6bcf6c616476920be1e576ea2089e52a66',
  'scenario ground-high-resistance-silt-creek.json, full round': '7931dfa1c43f930466c685cc431697e09de080ebf9f36c7d41d1be451e8e90d1',
  'scenario healthy-control-corvane-linden.json, full round': 'f94817d0783867c5dc1ce8ae6667db128a14d03be704c0a3aec471d955e1c148',
  'scenario intermittent-bplus-pike-hollow.json, full round': 'ca0b170d16756846b17293b4e1929487b3663d31824a14fe4c7c53b7a79639c3',
  'scenario key-off-draw-ellery-cross.json, full round': '4fa157fa80f68dec1e7df7910d02ad179888647d1b025fd865a54f3aa1c4b76c',
  'scenario post-corroded-fairlow-tern.json, full round': '1cab22edb87429e5d35deb612b94b36693f4a7a6d69f1d2be42d7bda04be6c6c',
  'scenario regulator-full-field-brackwater-mesa.json, full round': 'd5b088d6354ea97bd39824dbd54c3310234d8e15ff44c8a783cf3477b528c4d8',
  'scenario regulator-set-high-redcourt-alder.json, full round': '2a19351838941a08a5ca7e68e106828dbf00b6938018dd229d9058f340285544',
  'scenario regulator-set-low-quillon-vale.json, full round': '5f49b42169e71973db8fb6b24d2ddb863184b3ed9a6a80a4efaefaecdb5606f5',
  'scenario stator-phase-open-kestrel-bay.json, full round': '197ed9725050939c11b12f1803a5addc775840fdcd52bf02e712f9168580d686',
  'scenario weak-battery-and-draw-gannet-sound.json, full round': '3c02405093ed3265b30559db8621d7cbdda1a04461af07364bdca388a30e65cb',
  'scenario wrong-rating-dunmore-reach.json, full round': 'eb010836367c0d7341a2d9475d5b3fdd12a3a9866894cb636c0da45301bd2438',
  'default car, fusible-link-open injected live, intermittent': '92d227f0f1a044e0eb94091f556aa6bca318e07c29f9ea9b12452cb34b35d5d9',
  'default car, diode-open injected live': '3addf0f045cd3fbcb5630e933ea81bc282ba150b8e9183cd85d33bb330f24ec0',
  'default car, diode-shorted injected live': 'a6c5e6ddacb8868908805c6f5d8bb7e3725cdb5fee75a51b926fa78d1b471f95',
  'default car, stator-phase-open injected live, intermittent': 'e0100c1fd314c7e4b48df730610034fe1ceaf882d4cc8b80260d5ee34787058f',
  'default car, field-open injected live': '2c3d4594a0a737944442518a60277a7249121cff7734f9bc559e66966536debc',
  'default car, regulator-set-high injected live': '9784e9b6f6d9c7968102665fafc61f9758c0bdd289b01ec80983767df9807b6a',
  'default car, regulator-set-low injected live, intermittent': '628dd165ed5c0d1e88657864a388d3ec10641568b3a71244ac138b6ef01b13c4',
  'default car, regulator-full-field injected live': 'b56acd228ecb9c385f076f6880c43bee2bc56aabbdd400dc019de7bb8788abb0',
  'default car, belt-slip injected live': 'efd96ac09be441073636264f79a91179368e23fbb2fccc5b51bc561e6afc550b',
  'default car, bplus-high-resistance injected live, intermittent': '017f0e93a99b1728a834521117b7ba90c9ca918fa3610cb6c2ed1ca0615c362f',
  'default car, ground-high-resistance injected live': '86f638bc8ea0068919cc7dfe220609a24cc1f7e703168e36017df3f465b58d85',
  'default car, battery-weak injected live': '357dccc12e95a854e6964830fee4e4e1b300c807794564a6296d0550405739f7',
  'default car, key-off-draw injected live, intermittent': 'e5c71a0535f236cc6fa6c8e8bca190566c73e03d80f22a3985f6e4fd9acad934',
  'default car, wrong-rating injected live': 'e209ea3ce98141b1b21af9745fb09a23ff7a7216ae32645181a3c5bbaac89c17',
  'default car, post-corroded injected live': '0bf906ba211f85c5bd9e0ffbc6be8675b7593d04771558b89b67682d11495f61',
  'three intermittent faults at once, one cleared and re-injected': 'ec1d8b91bc5f1f944f6ba61f7e6d63497ab661611532c82ea4b6a8c1e48e673b',
  'a fusible link blown by a heavy load': '01846b0f622fdc3e1b97a55f34ce8000de8c8ef558d7b7db6d4ca593767856ab',
  'the pile overheats, trips, cools and resets': '6021ecaa32e24396f8b93bc8c28c18db6f3cdd092cdbbf8d324578f9d9ce7a2b',
  'the series ammeter fuse blows with the key on': '9e02df0be213ccf16a07acdfc1ba868d3efb17a6c6ed31538ba06365c6a8023e',
  'a flat weak battery stalls the crank, then a second try': '13f03c239919315d1fad084b253637573479ccf86ab4da8a97aa7909b45a7d68',
  'a slipping belt under heavy load and rpm changes': 'e0b369f529730cb6bf0f2c9f508d20162c035cce5e94afbf1cda7a9a18a3334f',
  'a regulator sensing B+': '012e07c1d5d228bd9fb1c5be9e317487926bacd9a52c5641a72b6e3bb5a7d036',
  'an open sense line': '9fe64b47be22b83981960a45b133f26053ed221c94d76541ddc5ff0fa700126a',
  'full field with B+ removed at speed: the overvoltage cut-out': '6ff524f2d3dbe3b2d770428ed2c694f93dff6ad415198623bfeeff0af8220ce9',
  'more than thirty faults (the uncached path)': 'f1aa706b3611dba2b74d060e083ab1cdfd21fe7ea69247a9a9846fcc579ce9e1',
  'key off for ten minutes: modules sleep, surface charge settles': 'a64cbaee82058134020aa2cbaa74c64a2bb070394c8f5022d379fcb7e3bb9261',
  'random attempt 0': '9465962610ea80ceb2e01c7c6d3a0e12262cf56898b363f57fb8cbd6416bebe5',
  'random attempt 1': '50e0af9ccfb290fd5787159dbdf00e170beb21ec998b2dcebd35d2c9f1c038ba',
  'random attempt 2': '55672cd34c4cc706c854ae0b0eae78eaec88c568c8e567e1b1087cdf4605bc34',
  'random attempt 3': '3a2b99799ed00413b98512ed02abe776254a3394a30bd0577c16b6ebd353f976',
  'random attempt 4': '2bf536b45678e7274d7fc63155a7579317a02f7ef2a38010df6cd688581adefa',
  'random attempt 5': 'cd078218a906f2960c7ff796f3a0599275a01a05363f83a424363866194e83b7',
  'random attempt 6': '8f3ca5e695e957c51ee9fea8abe63bce8e512e602bc90d61072cddbae2c6a909',
  'random attempt 7': 'a6b752410e79ac9b08d58fa30663a1d1f50c32c25c631500f844bdcade05ca8a',
  'random attempt 8': '8f61e9acce084997ae14410b4c6fc5aa89396cb1a1bd8d641a288b1792925189',
  'random attempt 9': 'f84b6d80662389f7c737849bdcdab5bc15c4530e110d2942cc70e45965ca3329',
  'random attempt 10': '61bae3f796c0be1c6c2f80283b144bbb02c8245e3b49331095b321c48600e1a7',
  'random attempt 11': 'f0f98d4f8a7af8ce968eb99e08058ddd5775e6f73c2dfec49dfca91977613c93',
  'bare step at 5, 20, 10 and 1 ms': '0cc3a746bfdc71c05b3cba7af35138f8ac1da1ea86d77e7328b7c89f3663aa45',
};

describe('golden runs (self-consistency: digests recorded from the model before its speed work)', () => {
  const runs = goldenRuns();

  it('has a recorded digest for every run and a run for every digest', () => {
    expect([...runs.map((r) => r.name), 'bare step at 5, 20, 10 and 1 ms'].sort()).toEqual(Object.keys(GOLDEN).sort());
  });

  for (const run of runs) {
    it(run.name, () => {
      const result = digestRun(run);
      expect(result.digest).toBe(GOLDEN[run.name]);
      // Stepping one step at a time ends where runAttempt does, and seeks from stored snapshots agree.
      expect(result.consistent).toBe(true);
      if (run.reaches) expect(run.reaches(result.reached), `the run no longer reaches what it is for: ${JSON.stringify(result.reached)}`).toBe(true);
    });
  }

  it('the elementary functions, bit for bit', () => {
    expect(digestMath(detMath)).toBe(GOLDEN_MATH);
  });

  it('bare step at 5, 20, 10 and 1 ms', () => {
    expect(digestOtherSteps()).toBe(GOLDEN['bare step at 5, 20, 10 and 1 ms']);
  });
});
