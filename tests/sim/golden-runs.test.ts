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
  'bench attempt, 10 minutes': '5deba79c2d8ea9b2a3f1b85d7f94764795a45a1a69884375ea8e941ac73a75ae',
  'bench attempt, 30 minutes, grading warm-up car': '679c3305ee81edf92e9ec7fef2015f69019c920cc6af718eace566d585718dff',
  'scenario battery-weak-marrowby-dune.json, full round': 'b1efd5174ff819f9202c6f18729fb1a26d15d382aa4009033992c5e656b53073',
  'scenario belt-slip-harlan-ridge.json, full round': '1942957d9bd07d64fe22ce7ab2fdbd827a73f6ee7dd91e37f1769507c90e8863',
  'scenario bplus-high-resistance-ambry-hollow.json, full round': '9e626b8c2552d985d59ffc340afb0ca516b329fe40f75e820ac0fdb4c9506599',
  'scenario diode-open-tarrow-flats.json, full round': '39abe6ce5518f073182100e33b46e507d036cd49d6839525059f1be3210ba9f1',
  'scenario diode-shorted-pellmont-wren.json, full round': 'abfffc4026c221c9dc0f423a6f3959a2d4e349317342afd8f818c8c47e4ced3e',
  'scenario field-open-orland-fen.json, full round': '4032022813c315929c9cf623dbb69e1c5016388338b79cd32da569e3084b7c16',
  'scenario fusible-link-open-westmark-drover.json, full round': 'a8d2528677108d6ca2bc908a2558cfef68bf85374a34665b75facbb26b7d1a78',
  'scenario ground-high-resistance-silt-creek.json, full round': '3c6ff22663efee064eca1e496538847a07adb6df7c16d437a353755bc064c3a0',
  'scenario healthy-control-corvane-linden.json, full round': '300310afefb364f993d0130a8d6f97830a9144ea03b7633b328b8557df153f18',
  'scenario intermittent-bplus-pike-hollow.json, full round': '67d45803d284d23712a64b2202d545663d52f1314f4f1590ea395e473b5dbb85',
  'scenario key-off-draw-ellery-cross.json, full round': '5b890ecadeb4849ac38b7e22bbc0deb1e5bb22ec16fd4d701e96c9468ebb9f04',
  'scenario post-corroded-fairlow-tern.json, full round': '4af36c6f6e586e825ad8b98701f7594d9b4a8bb139ffb87fb0eb9f15a8f6ab02',
  'scenario regulator-full-field-brackwater-mesa.json, full round': 'dfca7ed374e9a87cac6ba13fe34aef75247d862bd04f1e252cae6fd1aaca69d4',
  'scenario regulator-set-high-redcourt-alder.json, full round': '7f1b3bc1426102f9ddc4eec0d587b9212323bda55ff465bf62f5dd93d6d52bd9',
  'scenario regulator-set-low-quillon-vale.json, full round': '6bdc5950a5ddbf72e51d884cfda65c3f85a50059c0f26e7f4294ddc26ef2a291',
  'scenario stator-phase-open-kestrel-bay.json, full round': 'c0207aed1b8dfeb891da3ae1062189e0884a1f59bb48f8dcb808b5802c8ebb7e',
  'scenario weak-battery-and-draw-gannet-sound.json, full round': '65f723f918df286e166565d274aa9edfbd96ed060da9d12047b67d81a22dec0d',
  'scenario wrong-rating-dunmore-reach.json, full round': 'b26ce1a9e375b0ae25a3ff6fee3b11cc421775866479382cff2b593a526c9325',
  'default car, fusible-link-open injected live, intermittent': 'db6b17c8045d6b562ef1d570f33fd2d46ee4f84c978954b887ab5814aaf2ee54',
  'default car, diode-open injected live': 'ff4eaf6980d72f0a18235c9b328f90765ea580ecbd1a4975517ffd16ab15bf47',
  'default car, diode-shorted injected live': '3cbf3568f0c5ecded5a7cab714f530a6eb10eb2aaab293725bf84ee1b2f4e7c7',
  'default car, stator-phase-open injected live, intermittent': '30e7963b6fe5f092710a038451350361a55b23aa3bd4c119292d728aab751a3f',
  'default car, field-open injected live': '47728066f6b8a37dbd84be5fb9f04fa6b1acdb95105e34ad7a24c399d994dc29',
  'default car, regulator-set-high injected live': 'c221872e03cb2964dc45702e77e7103ee560bf0cad4bb272f923e3aba48d9697',
  'default car, regulator-set-low injected live, intermittent': '57c7a7769eb00d6eda30595feaa3a087d5f186d34291ea8467990f5bcc4057aa',
  'default car, regulator-full-field injected live': 'f7d8e5d7fd883a10c7ea512281df631c302afc5e4744d795156b61454cb97ad1',
  'default car, belt-slip injected live': 'dd6aae1b21507d40e464c80cedd3e85fa1a020f1972fa277928c2ca469dcecef',
  'default car, bplus-high-resistance injected live, intermittent': '404d5f0f53bdf1b82e26dd20e5ff61bc1c327b8d0ffc31a9a7863d05bc838e35',
  'default car, ground-high-resistance injected live': 'eb0be446b94c6da69da5d2ceaaaa0714d37e2c796f7d0b284964314469bc0a6e',
  'default car, battery-weak injected live': '2e5179169d89da93de15e67dc80592d285dcb27b01b75edd6e95191a67452bf9',
  'default car, key-off-draw injected live, intermittent': '9c1b7daaef9389a127d2e753c8beb75629a1fc87b43a45e56371c9b0e65a4cd7',
  'default car, wrong-rating injected live': '7b928e9e7a8c01e280553903f18b25912420652220575f6e4b21c847b09157f6',
  'default car, post-corroded injected live': '8a7be2fee7850e7b624bb02dde4bacff59c161c7d904228ae22b1f6d7d82ace8',
  'three intermittent faults at once, one cleared and re-injected': 'd39607439396fa3fa720897dd94bbbd6347ea6957f6e3d568cbdc6db9656f6e3',
  'a fusible link blown by a heavy load': '9c5dd74bada6beccacec5accaf41965fcda0b8845058170dd5327a493cf8d317',
  'the pile overheats, trips, cools and resets': 'fa5ac56eb4ae106d86171b1ebee22acf19ed0e200d45d3033973221f8f7f12f9',
  'the series ammeter fuse blows with the key on': 'b238ce65e4154a563cf4436d4b00b085d33f08dbce6f585bfce7d11a42841f06',
  'a flat weak battery stalls the crank, then a second try': '54615bbbf5a602a4a6ccfdf7c789bc8a24cf39f00674acf45bcda3d2f2d06882',
  'a slipping belt under heavy load and rpm changes': 'cd83515d04d914d61c38b2b2c72b76c1f2b93c26659af8f715c1f0705e03fccc',
  'a regulator sensing B+': '2679914468c77060e160dd70037a1ecc86103190877c58003fa18daa60abc364',
  'an open sense line': '7cd7d0fc26d3fddfff79ee12b56999a78bed175e52bc2d0853c95f75be909b92',
  'full field with B+ removed at speed: the overvoltage cut-out': 'd5c439f44aff0ed2c1a7fef5ec87b016aa1c01cfb06ef0e363fc1cd8c1dce470',
  'more than thirty faults (the uncached path)': 'efd62356e865fb026bf55b844ebd81966103bba2f96ee79ff86c1245e77f78a3',
  'key off for ten minutes: modules sleep, surface charge settles': 'c2dff1617111996d0112530c90e4882ff7c191e80d6744dbc100da9120ace69c',
  'random attempt 0': '6a93016a02e2ab6fc4d1b71ef74f723f6478770e2236fa916ce9efc03b601609',
  'random attempt 1': '4e2f2bb9057fd1a30624659ef7e6c2132be3867c0d946b657aea28c62b885bbc',
  'random attempt 2': 'f34ea5e5f19b1afbdebc37f72241c130f446dbd3e584391a6844535fb6ccb07a',
  'random attempt 3': '9a7dc6ad94904083645242b3704537890774d2a8f37e76d31d986e6acd937790',
  'random attempt 4': 'c0ec597caca1f018f3bb1ff8460877d6524c20354c3ca03ba2a156a92dfeb131',
  'random attempt 5': '30ff43a2d07b316580c83114188edcac430f93f95d4ce9a9bfb02eca454921ad',
  'random attempt 6': 'efb79ed973ef3f93efc2534f03b07457e3e1f90a8af3b4dd73c488990bb5dfb3',
  'random attempt 7': '98cedb9359e9d75b0b414447b73f4dd662c2ee3797632ae601c5123d589a43fd',
  'random attempt 8': '67094d71586c5e031d2f0f4b554a178e107b56a416945ce8659307163a6b45d4',
  'random attempt 9': '736261c3a9d316194af61d76e64fb9928adbb930deba64d01959bdee27e5eefd',
  'random attempt 10': '5ed63225113155232ea98683e69a9573721b2cbafda8430d50a330e069faa51c',
  'random attempt 11': '6f732380f4bce5d534ba1a760a6bd14b7ac8758db9caeccf1093cf14431fef7f',
  'bare step at 5, 20, 10 and 1 ms': '28c06af48018f3941d048695accda093c7a72085667a015349f250aa63cc6edf',
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
