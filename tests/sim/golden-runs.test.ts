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
  'bench attempt, 10 minutes': 'a8ccc3e5805de6e884c5dd72236c7eada46b9488c69bbb514b998e6139429c1f',
  'bench attempt, 30 minutes, grading warm-up car': 'ad139406955f702f2dd4da8388c31ca043926122ed3ba38983a4f1cc86a23bda',
  'scenario battery-weak-marrowby-dune.json, full round': 'c5e7804f04656afffb844c88838c52480e7473a655cd249e0f118e6d58041e04',
  'scenario belt-slip-harlan-ridge.json, full round': 'bd6c2b1a770445bcd4935ec6a4c311c40cdda50c44dc5a368ee232fce59f6f37',
  'scenario bplus-high-resistance-ambry-hollow.json, full round': '1686327f0e998d355592c044aa284be230550d42fca3b02d54fde48e80324d19',
  'scenario diode-open-tarrow-flats.json, full round': '318a3bf41e69129374cbbbb411c68dc34aee625f7d0b13f2891e9734863b9f17',
  'scenario diode-shorted-pellmont-wren.json, full round': '22cf850ee79ba5cd83cf3c5aefc8b77d014efd664d707f9cd408e05fe54cba45',
  'scenario field-open-orland-fen.json, full round': '793d5da47009bc76280f143f53c5543647ac4e6badbd2155dae1fa81852d988c',
  'scenario fusible-link-open-westmark-drover.json, full round': 'd9dba5f6c83e8ccdfb1a30d308315c02740599bd2eb683306f148d29409f222d',
  'scenario ground-high-resistance-silt-creek.json, full round': 'dd939d7ff482cc98af3ab4a4703f4bbfda8deeecc81cebc401de9af6aa789f9e',
  'scenario healthy-control-corvane-linden.json, full round': '75d81f787a080a776001e0d44cfb2c3baad1f2fa267ffbc865ba4c97b4a6f3e9',
  'scenario intermittent-bplus-pike-hollow.json, full round': '87f13333b597aede062f06f36f58a3ea9a239bf7d6f1205cb024ac11e31c597d',
  'scenario key-off-draw-ellery-cross.json, full round': '4283c4764b613d4a5a38ac9659ed160082b5dbcab797b3833ef7dd760ce6d8b1',
  'scenario post-corroded-fairlow-tern.json, full round': '8e353c099340094f4570a1d51fe6461b181395e696586b00a8c24c376aea79a5',
  'scenario regulator-full-field-brackwater-mesa.json, full round': '2839ed1c3764ebc69600bb54a140036b56a96fe10a3f0b66fe6bc9b47ff271d7',
  'scenario regulator-set-high-redcourt-alder.json, full round': '78756268fe33ba90eae3186123bca5e22c24ae6d6f85ee252b03feee5788f724',
  'scenario regulator-set-low-quillon-vale.json, full round': '7ea30899a988a7a160c0404f38263c8bf7f1df1daf13bb15c4237038a06070e0',
  'scenario stator-phase-open-kestrel-bay.json, full round': '9bdcf2ddf85a3b05a8414a7e501bdd38616c237a98f8995ae72b020e344f2d60',
  'scenario weak-battery-and-draw-gannet-sound.json, full round': 'd0405f407be97a08ddefb941a6ec66f76351805ab498aa440792239cb9a2a0f2',
  'scenario wrong-rating-dunmore-reach.json, full round': '746db2aa2665382b0d0cc994203f263c4eed6d9581d1f9c07728ebf72217d0c1',
  'default car, fusible-link-open injected live, intermittent': '369f55725e5238e9104a72358b93b6231245de92764d5094c22a5accad7aaeb0',
  'default car, diode-open injected live': 'beacab45b5359f854371f4755b0b0a21c36da7d07b4763e5421b8dd0a1c5b799',
  'default car, diode-shorted injected live': '276abe3f5e265ad91f1c5c3c04a0c9b018037c0d0d52d5aaa00cffcb412fd7a1',
  'default car, stator-phase-open injected live, intermittent': '4ab83d000289c7273150ee9cdadc7926afbdd6ee757f746dfe45e333d5145813',
  'default car, field-open injected live': '1f0bcf7d2ec17919cf3eeff9b16725dd55742039bf5b65cf3a6b4c3781faa438',
  'default car, regulator-set-high injected live': '9cd07d17efc750559952f3b2c6e5bd474afb85ff09e9d899fec00005840697c3',
  'default car, regulator-set-low injected live, intermittent': 'e0da98f447518dff77e2819f6b6c9be2026277468bb1fe8d7ece614b3342e920',
  'default car, regulator-full-field injected live': '0a5894346b3c7625fc20244463e4832ef17337fdf8f80f18a34885a0b159c9cc',
  'default car, belt-slip injected live': '0ecd366f055a1b387f66b5057dd1a9752806152e1642306aa67e0e66cfa0b352',
  'default car, bplus-high-resistance injected live, intermittent': '8552539d07e36390bf403f3755d2022de7c3f3769213d1b7a2f2cb24fc5e7581',
  'default car, ground-high-resistance injected live': '617453732c3ea5f97cca4362b52ee8f8a60bcbae6e9d5186bd7be94aed7a17f4',
  'default car, battery-weak injected live': 'a268af65c778b613915b66c4ce2c7db732b2ea892946b0ac30f371d50243bc45',
  'default car, key-off-draw injected live, intermittent': '56660d16012ddfc2646f7ed145bc1a402d3679fb83acb3f742771314493948cd',
  'default car, wrong-rating injected live': 'c024f6dee2455f9f1ac37d5d057290ee4172d79d54a6c056e98ae2622167a408',
  'default car, post-corroded injected live': 'adddddb87890fb7bedad8101afdf29de4e0ef97d97247bfe62f6684a89c66c3d',
  'three intermittent faults at once, one cleared and re-injected': '177fb43c7090503ecf797d27e01b9c7709478865492a32b24e8334c43aa3ad64',
  'a fusible link blown by a heavy load': '34ac8bf8033194f675dba08744ce6431d0a78abb449355a7b9371596e7cd1d3e',
  'the pile overheats, trips, cools and resets': 'c65f43c7efb861e37a1669ce0d8bf0e9206c7cbc2491653b45dc42d2e126c060',
  'the series ammeter fuse blows with the key on': 'f3d54cd4e6f1af7dc7452c947cc1c918388d629f7cb6c50426c834a51a991235',
  'a flat weak battery stalls the crank, then a second try': 'f2f3d693ea6531dd43fbd36160d6836ff99592a7b4548e2b028ca9f9e2549b83',
  'a slipping belt under heavy load and rpm changes': 'f3b8907783ef0280d940b94e037da727ead058ff4d78b2b5519b67ac1cde6ae0',
  'a regulator sensing B+': '2122eda1449aef2e0cd7cfd4596cd5f5ff3e03a68e66cbe25f4c2ce47135bfda',
  'an open sense line': 'be531365432e624d973f41c813004176025fe5519aa5ea663b0a8a71a21017bc',
  'full field with B+ removed at speed: the overvoltage cut-out': 'b546ea4f599921c82472e7bc1cc2e725c347f71f778f76ea522e6c0f3d8e790d',
  'more than thirty faults (the uncached path)': 'cb454f5cdb77b0c4c7a5ba4d1c8cacf427e944bde1b65601644a17f6c5075b3c',
  'key off for ten minutes: modules sleep, surface charge settles': 'b9819e12f2789d13d8df67b71ed8b55f11a382d08bdad4c696adb246891176fb',
  'random attempt 0': 'ceadbc91a7949b403a8b5fe14298e8f95a14841acac493c4ebd5eaf805ed17e8',
  'random attempt 1': '419da2225e05dce36c62792b4e177f9664eeb964897d5450a6c6639ff2466579',
  'random attempt 2': '538376e1ab5ee70d0d70c4082c0258a00a4650b0cc7e8918e30d482b55ef25ab',
  'random attempt 3': 'f9c736260e207c3ca343ce6002ef3ecc7e2740ae2c59b022b564b119c1c0a882',
  'random attempt 4': '0fc6f9a61a3f0237d8138b4b369ebd7a1dbeaa661a7c93964063cef4b8f11e3b',
  'random attempt 5': 'f3ec1f36581fbf8d90e63006050f362cee223c61680bb1b066fe473e422082c4',
  'random attempt 6': 'd43c2cae9662fcd66ed996bb12cca7f224f6371146ce8bcaa0d3656c5b2b2302',
  'random attempt 7': 'c198a7d582ced544d41ac5b6e6192a25764975c8e85d186a5d6a140868c5f9a2',
  'random attempt 8': '7f3f91c926708874455ab1cb46392264f6627f5cf2656264ec1c91bdfb8d963b',
  'random attempt 9': '3668bc2151b9f6c99f8df3bcb3deec897a7f6d03c900b10471b0a61e61399766',
  'random attempt 10': '6aa617ec20f4e778890827b9320db126224bc255abf7d0522b63c0aa8304defc',
  'random attempt 11': '1016db19ac36f24b245dd09c7211939c9457bf11aa9c55e80e5eaea1d4385bef',
  'bare step at 5, 20, 10 and 1 ms': '9a86d5822eb504ffb0bd22613d9d1063fd614e485a20686746528cc00043d281',
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
