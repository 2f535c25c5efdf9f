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
  'bench attempt, 10 minutes': '7ddac40c93d59c956d2ffbce272cca607860af2f77259a93b7c8a6937e314e8a',
  'bench attempt, 30 minutes, grading warm-up car': '7ba3807bbab57f1982b7fe80171358ab7fbbe13c360a0bf77f9aed23941ed056',
  'scenario battery-weak-marrowby-dune.json, full round': 'f29673ffcc6ff5d130535f3b169ec10f48aceadbf1d4a07b16d6caca577a7caf',
  'scenario belt-slip-harlan-ridge.json, full round': '0a6930cacbcf43d128b9a263d00bd7fdb8739e48800b7e0ddc8e802d75ecb4c8',
  'scenario bplus-high-resistance-ambry-hollow.json, full round': 'f59f1b38b1e5907cbf540d7cbb5c86025e1baf6c47c1e4ce36550cf0698d010f',
  'scenario diode-open-tarrow-flats.json, full round': 'af1e8b394728bb6803521238df68a8b73925a5ed201cbcfb16898b95aa6b3023',
  'scenario diode-shorted-pellmont-wren.json, full round': 'eae434a8d932721d356bec09652b74e6c7cfadd0e18fddb033860bf115259f18',
  'scenario field-open-orland-fen.json, full round': 'ac1883bbdc6554654bcdb53971f2ddd031c7c847009c6ed7230aa4e7939bf4f8',
  'scenario fusible-link-open-westmark-drover.json, full round': '00be52cf6a941fb70e6ec4dbddd26ae8ceea0e54d89a833b37e794d73a64bcc4',
  'scenario ground-high-resistance-silt-creek.json, full round': 'e1b922ea14fcb379b0093c23ba60a8d59d2c9f984aa700f8e7fe86473d86c8c4',
  'scenario healthy-control-corvane-linden.json, full round': 'c391a33e2b039179c068749c909de35a5e4a7710c6386e191a08a465621bb657',
  'scenario intermittent-bplus-pike-hollow.json, full round': '56db0f9ed68e00e58d8682ce3d94b7b6c175904578cf36d848c90309be8a9cce',
  'scenario key-off-draw-ellery-cross.json, full round': '44c2deade53271e4235e3535be3f7624ad16225960fbb37e6de189c6a549bfa9',
  'scenario post-corroded-fairlow-tern.json, full round': 'fb2ddbdf936d2cf77f688e176a1d6fae3e03c7b94364267d4342b17309f7f307',
  'scenario regulator-full-field-brackwater-mesa.json, full round': '9175abfc285ca9951e2b7ca0f6f1277d7170ccdb848f66e647c12b8f96b8f118',
  'scenario regulator-set-high-redcourt-alder.json, full round': '4a1c141144095a9e846556aacc0eadfae4481ed54dc881d3779e0a2610855e86',
  'scenario regulator-set-low-quillon-vale.json, full round': 'a6a8317b816d39a9babeaf4611e6b1f915a5eeb579bc734dd8d105a4cca1d822',
  'scenario stator-phase-open-kestrel-bay.json, full round': '4ce47ab3b69aa9fb1f6312abd1e7782cf5658524e442032cdf2f98ad065e3c50',
  'scenario weak-battery-and-draw-gannet-sound.json, full round': 'b8c362a5e9293ebe84ed912128609fc587bef157a80bcac6d4ee7603c21e560f',
  'scenario wrong-rating-dunmore-reach.json, full round': 'dc9a3c19523db4d12dca8bbd4fb7862b2499b591912ab2fc036d8812e397f496',
  'default car, fusible-link-open injected live, intermittent': '2e294b1c078636241f5e17327fa08963989922b3b833ed0c241b1e3a8dd26de5',
  'default car, diode-open injected live': '191c63c0af97c7cb23f01309c30c10673c9c293b41efade0ae70a8d9b3edeaa4',
  'default car, diode-shorted injected live': '5395bf20b935d51aebf9f7f7b39087ed66fddbb93edabaac7a199093a82b2f68',
  'default car, stator-phase-open injected live, intermittent': 'f92c568f62d23200e31a6a136f1c59c773a532d370761ccd8ec9e0b5630d6718',
  'default car, field-open injected live': 'ca4bf6b40090d79d3bf5de193a072b61e8f8a8b656f8981515530cbbc358407e',
  'default car, regulator-set-high injected live': '3313fdf32cbc0a0764dd74feb65f18099789f7a5d41ea7c919e20a204f314350',
  'default car, regulator-set-low injected live, intermittent': '0309848ba471c1cc2fa5f683573a7ec6865cff60e21e8e0490f11f59c3d4ddda',
  'default car, regulator-full-field injected live': 'c7cb51d1074e4f018c41136a3eecabfa8d069d1cfd9822e652f446781ec86c6f',
  'default car, belt-slip injected live': '2cd4ad8d0d8d972d4c2b2ea94bf44fa07bf26035ecbb9a043a9c2a9870277850',
  'default car, bplus-high-resistance injected live, intermittent': 'ca72d1ae6f3a96f78eb9f806744c29d9d53bb0014c296ad55e2c568bb65fdc6d',
  'default car, ground-high-resistance injected live': 'e66e226beb0ce1857bad9143ff00dfe330b112424b7449109db213cdfcb061c9',
  'default car, battery-weak injected live': 'ce1a373b940564fdff152ea7bcef212640b5aa56c99a6cef77839937f6a3ddd0',
  'default car, key-off-draw injected live, intermittent': '135bc8b0d8db60ca54774e294c0b92c348579fd518b388c3eb29e896575c6e2b',
  'default car, wrong-rating injected live': '81e058fa5cd42a3d42e773800880e81b32ca6c716bb5c5b2f722b18ade3242fb',
  'default car, post-corroded injected live': 'd364a47ce399428eaa3d7347e8ceca78c9ec58d6dd58edc361ae44ff971f211b',
  'three intermittent faults at once, one cleared and re-injected': 'a72164b5e276f5ce295c0ae7ca9084ee68af837b4a91787822d5dc33add78300',
  'a fusible link blown by a heavy load': 'dd43216f5d3d02318c110d780abbd2f7b67a40892daa0d63e39abe039642db3e',
  'the pile overheats, trips, cools and resets': 'c70a22ab0e3b761c1d67b9f4e7104e318dd108d7266f188c11076a3e3119cf43',
  'the series ammeter fuse blows with the key on': '79e3c045c8e668c50c4b96ff7fe9d46202afd52da8f3f8131b6710891eadfb72',
  'a flat weak battery stalls the crank, then a second try': 'f6e05fafab4f188c01acf4e57ce8e5abfefeb7a02ab38561a60192a722e3d342',
  'a slipping belt under heavy load and rpm changes': 'bf5cf1c22c02dbb5799d9f5eba672769a89d4cf9a4392aa93ca6cbf85a66aac7',
  'a regulator sensing B+': 'f850da90939de932db0a6b2d80fb2a48658ffda827a60f6fee59881dfb7ecad0',
  'an open sense line': 'c5811f30f1234990d3678fd5fe281ac48a48bf517c97939176e81d632039c759',
  'full field with B+ removed at speed: the overvoltage cut-out': '3f64054ed89ff414615687feb3e877edafc97ce85e6db3f46cb14240187371aa',
  'more than thirty faults (the uncached path)': '4a391365a7c0bec7176d984ed2b3f6b0d17c11f300d5a5219ff6140f702ba1da',
  'key off for ten minutes: modules sleep, surface charge settles': '85e055839f9256231f7863f6762ad11ba45845d5043b4a360ad5e9daa1a89e99',
  'random attempt 0': '93db468d9e704e540c7551788c57f1bb8631682c708e83896a8adfd9d19e0f52',
  'random attempt 1': 'f93b7ef80c223edead00c9e2439b358696eb36c482058c06d5db513c13e793c5',
  'random attempt 2': '21978d614a9e239a2f0775e8d8203be3872d7114be5b2699a6de655125496293',
  'random attempt 3': 'c20b6c42d2fb8e236837fade5850f6282a45621fc32499e3b5b3d46023b1706f',
  'random attempt 4': '4afe038a52f9b739d4c676a3ad98c34e22074ec31349f251526ddb682b12818c',
  'random attempt 5': '2213c05f7622b848cf16d8347dc2eb54a4ff5f38dde9be1f9a987c783e39f018',
  'random attempt 6': 'f6a89d6b9188f904609580b2d281da1bee87523096627d84faa91109a3127cc3',
  'random attempt 7': '7e78c153fd801d248b7627313e221a209d8e4ccae10db5a8a8d36e4d268ecff4',
  'random attempt 8': '179f6ccbc39cdc0d25b106399447ce68eb140654f8d775eef8ce3a58710880ac',
  'random attempt 9': 'f7d1ff3b4cf278ccee86e0fddb43d5bd6cb62ac8f2328f0a84ae9a7a2059f446',
  'random attempt 10': 'f508eb598a28250f9d8288dc2eaa5b450bb4c9379dfbd54a7bde02d6f272a413',
  'random attempt 11': '1cfa3b94b0099e49715321235c04f534721e8853cf738c0e68c74858868ab86c',
  'bare step at 5, 20, 10 and 1 ms': '44961bee31df39b920dee69a29262bf6873ae93c53510f0d00a2a39436e9c168',
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
