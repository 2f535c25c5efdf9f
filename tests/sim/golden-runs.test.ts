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
  'bench attempt, 10 minutes': '6aed0eccf9e451f94f5c06a25fa53b336a89ef40bc274f026f508a00fdef01b4',
  'bench attempt, 30 minutes, grading warm-up car': '9fa7175e5abe6ae951290b9c2168d2e2574c3575423f5debf5eea2e0cbcc5243',
  'scenario battery-weak-marrowby-dune.json, full round': 'e5ba3e742c94334107c7631ff1c2d9bde1d2125afe15ec0688aaf35cae3c8832',
  'scenario belt-slip-harlan-ridge.json, full round': '836a5465d56826248875f5a6d923c5562f112efdd3460992b7ccc7c2a5e7cc1f',
  'scenario bplus-high-resistance-ambry-hollow.json, full round': '10ea437078a12777517247ef4a720b51211fec1df3a0ad8d93b8d6129d357232',
  'scenario diode-open-tarrow-flats.json, full round': 'fe7aa134577691e3919530f09aaa1284fd7b54fb580a2ce8f0cd9a2feac84fd0',
  'scenario diode-shorted-pellmont-wren.json, full round': '218680ff4691a381da8a0d6d1ee5eb48dd4e589bf15466e118256b76cf9d0f48',
  'scenario field-open-orland-fen.json, full round': 'da9cb0f5530e88e961c00b6b84a072db19f5ba8e1016e41b1aa734abe606617f',
  'scenario fusible-link-open-westmark-drover.json, full round': 'f23ddfbf1108cc3ce77cc73ed7296554df9a8608cb0cae02205b46eec1c47496',
  'scenario ground-high-resistance-silt-creek.json, full round': '89ded029c1b9838dd3515812f6e317d683ca523ed14293cb6d672e90f7ba72cf',
  'scenario healthy-control-corvane-linden.json, full round': '3030f8526d28c97c3000793007c8559f3e35f941ff01a19452c7425a612f7d3b',
  'scenario intermittent-bplus-pike-hollow.json, full round': 'd3eea1bb5e231f8df9d49296135bd1812318db68834916f0aa30a604c86285cc',
  'scenario key-off-draw-ellery-cross.json, full round': '6f0ce03feabe67fb48893f0f8d2a1658f044c1830b6eddf1d68a468b3d9162f7',
  'scenario post-corroded-fairlow-tern.json, full round': '65c7520ff329f3ef8462a02fd11298d16b80323c4dbf6a713ab3e9879ae2e71a',
  'scenario regulator-full-field-brackwater-mesa.json, full round': '79fccab46fa657695732d448ff504562175df2cb3ccae0b66fa0e37c4bf66f08',
  'scenario regulator-set-high-redcourt-alder.json, full round': '49881373b0d596a1488fdac50e7505cc8f03a59e24ae055b9f9dba149286ed47',
  'scenario regulator-set-low-quillon-vale.json, full round': 'f450fb8792b2f6dca4f4f9cca9794d5b6e3b31c0c284b070e481360b8ddd62ef',
  'scenario stator-phase-open-kestrel-bay.json, full round': '45e0eff5426d8407d27069a4d232ccef745b4fbf948da58f4c465cfab8b71e15',
  'scenario weak-battery-and-draw-gannet-sound.json, full round': '3c02405093ed3265b30559db8621d7cbdda1a04461af07364bdca388a30e65cb',
  'scenario wrong-rating-dunmore-reach.json, full round': '331b7d9b6d0400c9744e7de60c5e777ed02cac407399067db0f60e107a4c7b69',
  'default car, fusible-link-open injected live, intermittent': 'a763c08b1abaa6c1da7f5f304787520838cee73d68218458541104e4fdafa00c',
  'default car, diode-open injected live': 'd5ac1e3a464d48d1ffcd27820f1f8a9461dd11994bb4ff3332179915bf04e2d8',
  'default car, diode-shorted injected live': '1b932e26a359b39303eaf38f9d62cfb21a6480a476cac9d6c2960db84117f7cb',
  'default car, stator-phase-open injected live, intermittent': 'b31e8cf145089be82c0b82584280f5ac7f1b12ef5270ff6b2986d85ca68307aa',
  'default car, field-open injected live': '85daa5c53fb7c34a203fc93753275dd3382c19cd2591eabefa2cfc0fb2cb3d20',
  'default car, regulator-set-high injected live': '042fd1a3c6d046363cab4162ddf1fec4c3a831dace4d2c703afcd9b54f7df8a9',
  'default car, regulator-set-low injected live, intermittent': '2be38697aac34d8ae2dcb85d4d42ba367faa1cb2fd3c672d8576458649c0f631',
  'default car, regulator-full-field injected live': '29b588c7d32a8e4b6e88c1bb3c3b5958cfed64f8dae13775ace61951dbb630cd',
  'default car, belt-slip injected live': 'f251c63adb67cc46b71f40c288a2d21915253d8208277d39fc44f19dec2ed536',
  'default car, bplus-high-resistance injected live, intermittent': '9f75267af4e01db15e2751ebab633f058c3742ad074e90ee4ff455c85682a470',
  'default car, ground-high-resistance injected live': 'a49a20e255f3916042757e7d2fba23643d1c870a4d509f1767136ebd13f5a55a',
  'default car, battery-weak injected live': 'ea6dd5f40ba2a940989da6ed58c9b42b7c3548c31e7c50997224c298d2527fa1',
  'default car, key-off-draw injected live, intermittent': '538d5ea08aee376f852adfe11ce6c8ff09a1272160ae05ea1c400c9121802ff8',
  'default car, wrong-rating injected live': '165c011dc9cb8f35a30dd054760fb451691cae160f9de5372160c8040cb9582a',
  'default car, post-corroded injected live': 'ac64015c290c86cb831cef50290497c26695e452cd796ccce24a67fa7ab18116',
  'three intermittent faults at once, one cleared and re-injected': '93ea48932e0dac12baee316c908ed020da136d091963a03be93840c530972695',
  'a fusible link blown by a heavy load': 'bc2f3d6b10eb4fd08dd8c71ed2ee6fde542caa3f110ad0a17114a4f7dbeddd94',
  'the pile overheats, trips, cools and resets': '7beb6db1e7318b6d1c601df91b08d2098f50df37a8f20116071973d1224d750f',
  'the series ammeter fuse blows with the key on': 'fc7242e3367e7020e250430ac7fdd1e83b8f04d4ee79e59e11e3f5a8901fcb57',
  'a flat weak battery stalls the crank, then a second try': '13f03c239919315d1fad084b253637573479ccf86ab4da8a97aa7909b45a7d68',
  'a slipping belt under heavy load and rpm changes': '3c7e017b4cd4f1aabad91a69e3494f57842633adbee5ee03757e082a1c5bc89a',
  'a regulator sensing B+': 'b75390559f0b0c12cf047e054ed7bc157a307fbfcaa9ed02aa901b3f5c6fe231',
  'an open sense line': '6877a92f3b2f12e58c1b59305d8d11f246c28edf4cc48911b00315edcc585ba2',
  'full field with B+ removed at speed: the overvoltage cut-out': '0d7731079a37c91e572501fe3c4e19ec8d963001184de19d4fa39f315d7ec85d',
  'more than thirty faults (the uncached path)': '71b12ed0d660cd2548ad85ee22f940c575d4d856923bd6509a53c2747f288c24',
  'key off for ten minutes: modules sleep, surface charge settles': '37588e33cfb1785da30d6e34edad1a98e416959e71599c74366088546b186786',
  'random attempt 0': '8b40f1bc28f48db890c538a7b3c241c9e08444059fa3b7956110c7f8063b68ad',
  'random attempt 1': '8f76cfea71bcba49feaacff1ea9bbfed9a39f08de8386d630aaa9b8983931ef7',
  'random attempt 2': 'c7a09fdb96aa3c91df661de1db7c3ffabd22f192855893284ee340314dda0b3c',
  'random attempt 3': '1cd3d0fa2e1085e9e236cdb5256da5dc4804a6132fec2bc868607faf524f04be',
  'random attempt 4': '7e8a12fed3e5f2b62cf45f394ebb4390047fc203be557193f0266bb3913e2611',
  'random attempt 5': '31596a615165d705872693002045b68e94dfaafb6f2134746e667583b7bbcde8',
  'random attempt 6': 'c14450b70b32d72114b9e1b018bfb3f6d0e328fa9849fbb73778aca203529838',
  'random attempt 7': '0dc9dc5f87617c7f33db2f310337ec6e5305fb4e1ed50aa4c7e60c90fbbde0d2',
  'random attempt 8': '1ad835ef4bf658ed606b791b18d891082230e70afeb4a1141bd05673ebc592ab',
  'random attempt 9': '6e5e1bd0c837fd9d9b23f8099ef503b51a85159d92fe62d679ba3b066d13d47a',
  'random attempt 10': 'fa581053da9d42ed3ad13acf6411cf2bc0ac16d819065cc09431ccddb62323be',
  'random attempt 11': '49fbf96418fba39887add9fa7a40b82de7017bdb39e1a4f23a1f449bf27f7905',
  'bare step at 5, 20, 10 and 1 ms': '552fd1ea64768b98320259b6643b1583e253abb57d3debd3dfd8f31d0042e598',
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
