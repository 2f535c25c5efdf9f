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
  'bench attempt, 10 minutes': 'f7cf4d090a6946307efd416cceb6e7bcdfff685af1c143966cdcd5a847ca7590',
  'bench attempt, 30 minutes, grading warm-up car': '7719fc4b0e2fa6b8725e1e4e7865210c9e36892a2e32bf095c89071047b6e1f1',
  'scenario battery-weak-marrowby-dune.json, full round': '2a92a36796456ad827aac79a9881f6b015e2d89c8135e9bb9035b3f5f1533b6e',
  'scenario belt-slip-harlan-ridge.json, full round': 'b9db6039608ea1b8074a9f6bb4b1507faa8190b5701137dcd16ebc52d9cead9b',
  'scenario bplus-high-resistance-ambry-hollow.json, full round': 'c9dddb146c5860480a43cc4e359ab99a66b421154a406baa7e38d7158dc967f6',
  'scenario diode-open-tarrow-flats.json, full round': '48e9b268df89f2f5343ceac343425fa4368e397d547bfa54cde54ed2699f2f42',
  'scenario diode-shorted-pellmont-wren.json, full round': 'df624c25372c0802005d129decd3eb39438ab91ff8cb66622b7cd9d58432a726',
  'scenario field-open-orland-fen.json, full round': 'b0fd96f5e35fd461cc58637998d0762e624926e3163d22324663d476c637d16d',
  'scenario fusible-link-open-westmark-drover.json, full round': 'e2434b3da223a34b9d74c128d9432be9477db78d9ed4e435d8ae8ee712fe1e14',
  'scenario ground-high-resistance-silt-creek.json, full round': '010a4889f7b8bac2db7c80fe669eb0a0ee54befc04336d94e173f8d35a65d927',
  'scenario healthy-control-corvane-linden.json, full round': '6f9944d0237ea11a58334f08c853384ef86fb4735f89b191fc6094d2cefcdcca',
  'scenario intermittent-bplus-pike-hollow.json, full round': '3e3dcbed2cacceff6702dccbfb80eff4587522196a2cc0e74b29c8533cf0bdd0',
  'scenario key-off-draw-ellery-cross.json, full round': '6195dfc6b0c6e005ced9bba642947472e567cfe5ed02845eaa8e0361679560cd',
  'scenario post-corroded-fairlow-tern.json, full round': '3f4f433cc1225c8b7d224afb8f1f32770bff71eecb97686e39129bf87cb1f40f',
  'scenario regulator-full-field-brackwater-mesa.json, full round': '869b34b73a4b05a2ad73da5b2b6c458d3f50c872cd2f499f92f4f17e02afe7ab',
  'scenario regulator-set-high-redcourt-alder.json, full round': '66a293d1bee662b746579f856c3001c60e1591c5edb3972721bb6e2caa0ab3bd',
  'scenario regulator-set-low-quillon-vale.json, full round': 'ca245f84e60fecd6d529a00ca68078b5d4a24d1fa8592a78971c3e718069eb2f',
  'scenario stator-phase-open-kestrel-bay.json, full round': '99055ee487cdc547893ca86261670889847a762fa49202cc39fa258b6d18442e',
  'scenario weak-battery-and-draw-gannet-sound.json, full round': '46e545f98a9666e164410a3e58e68d758c60714ee4f267dc4e3ed715ba140920',
  'scenario wrong-rating-dunmore-reach.json, full round': '287437aba6d1d351676fb688eac326bb8a27c17886571fc8c78b125a7c925a60',
  'default car, fusible-link-open injected live, intermittent': '21ce93ce2f2a4827fda36d0234b42eb5aadb0bb1cf605c89a4f3a5df855a3eb1',
  'default car, diode-open injected live': 'c79de33b6145ad808cb5cb663440acfadf2de568e92647baa3e916bb9fd632f5',
  'default car, diode-shorted injected live': '98dfbd1f9cb753bcb8845fee426dcea102a9c87d53927bc0bec972fb13ce035a',
  'default car, stator-phase-open injected live, intermittent': 'c61984ffd64a94b347c3e2fda4f3d6665201e6ec50b32addd2977766a42bcb29',
  'default car, field-open injected live': 'bd0a55eb5b439172d208bd7aeb80e7d1da2eacd282a8b566f24b54adf32b81c0',
  'default car, regulator-set-high injected live': '174a08e7ebaecc424316c8df916866794a84e452949c813241929bf084504889',
  'default car, regulator-set-low injected live, intermittent': 'b9f241599c4be3e8923f01ef036bd6ae0828833587a01a1782459417c7a03dd1',
  'default car, regulator-full-field injected live': '8734a5651b09b6911d48748349fc7a66ce3a00cda96f957405d5b7ae98ef856f',
  'default car, belt-slip injected live': 'a97fa0aa8afb9620caed4d989219f10df5b7ed7c36ef3214bb76e4c5cb0355e2',
  'default car, bplus-high-resistance injected live, intermittent': '5b7006f31eb39758b9caa6e046bdd6864c769d79fec7cee9e6d4e7991d959a86',
  'default car, ground-high-resistance injected live': 'eb9831d23f29a4fe4f0e9ceba8c8759da445828efb418e42fcea4f8066e518fa',
  'default car, battery-weak injected live': '75c239d8c1d8894ea47b450a40fed2e3848ce79c469efcfa2ca8c422e26cffb1',
  'default car, key-off-draw injected live, intermittent': '6433d0f03b82e4addbb707ad00960ddb142399708dc53709fef988a5f1a14f7a',
  'default car, wrong-rating injected live': '12837766ccb94195a550de1b8e4ccc0c9fd29625484d8f39781851df7e2ac4ad',
  'default car, post-corroded injected live': '9e63ddc428b786c75b0596958e81d809bf2e3da7d87cc4cffb18fa8764514d48',
  'three intermittent faults at once, one cleared and re-injected': '3c22acd93715f5e9914f7cd4fe0f38cd3ca5a4d52aafd730a456df63cd4b69c4',
  'a fusible link blown by a heavy load': '207880e4dcc4dbf781b3537a1ef51c2a260cfc42a87e10f1395ee748430f90f7',
  'the pile overheats, trips, cools and resets': '2dae37d1d386949a1134b031e6880043e6e6348d14d8e86fd08ec580f882baa8',
  'the series ammeter fuse blows with the key on': 'f7eafc7286f50ba4e2025c80e9ce1b2868044e0996630dc3099e2932d639cdf1',
  'a flat weak battery stalls the crank, then a second try': '84c52799bf1a3b6646f35734e80d0f55973dd0b20866ce630664f526ba8ef59b',
  'a slipping belt under heavy load and rpm changes': '3cb49963a498dbbf86a1d0aa68ea9c0176ea2466d4c3920e2134ca6939c35b82',
  'a regulator sensing B+': 'e6eeb25f941d7051b2d32b59653b2f27c5df5e53d14a544e80aece6c6d86eb26',
  'an open sense line': '19cabb263ac92538bca53c589d2c59868d1e33bb2494681bf76bc38cf8c9658a',
  'full field with B+ removed at speed: the overvoltage cut-out': '0bd8c603c60916bb9b1320515b76807875e743d1634ef39d6b6adeae0a5f349d',
  'more than thirty faults (the uncached path)': 'e3b6aff1230def9bab46d2227ab1854b30aa125db5756de5e663665538897f3b',
  'key off for ten minutes: modules sleep, surface charge settles': '185eeec1f12186c7585639887c15c4a3ac84a0e255b5b684706e8db167699825',
  'random attempt 0': 'a38c812230833e0a9ccbdc57c4cf4d286d9307386ea4d3a67df39be693d3edea',
  'random attempt 1': '8ea6634bdd9012779650145edb4bcbd91a90c5a9a0e5bf2b82d921944c2d21d0',
  'random attempt 2': '9097e8221287bb0f562cff07461560b88460c9a2f610bc0fa090d57c49539c65',
  'random attempt 3': '046e20f6df3b8bb7548e2d9d0399e54155cb7241cc15b6734cc804aed64d8646',
  'random attempt 4': '65a4e0f001c033e7b8ee39e66d8e16aab9ddb69c45fc036cb75becca570a69f7',
  'random attempt 5': '6f3a35d5f859da0693172d4ac0064da761e101a5c164efba34abd348da6cd3fd',
  'random attempt 6': '7525ec22326963fa49365eed2d1c94b0b13d84012ff169fa985082a40e5a2645',
  'random attempt 7': '08f2e4ef7031235a05b4c4b44bc03e603206593dec381f4bdf280a8780f63172',
  'random attempt 8': '8c045403c8fd96592f23c824c9182248e112e6d2069194829c8a863f5395176f',
  'random attempt 9': 'a9b5a198c9a13a539bbb20481ffe0c096ca3f97cd9a21788d7cda0bd536d7c25',
  'random attempt 10': '934e80bbde27d6d33a45fdc7ac3f5e9ae567f7151ae2bd782f6d4943c0be4189',
  'random attempt 11': '3c3cfc2d0117554ec5b3a2a91e06931c87f7c0a61802f3125c459cca82146508',
  'bare step at 5, 20, 10 and 1 ms': '3bb46c5f5b818e2c29be56f8b521d373859ecbe3774d3a9c6946968e20c7e505',
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
