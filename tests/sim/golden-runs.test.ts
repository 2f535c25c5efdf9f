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
  'bench attempt, 10 minutes': '3e66c7748bd81f2b2e6d1c89b3b1b700509d900e7986fd954b64cbbc6f8f564f',
  'bench attempt, 30 minutes, grading warm-up car': '391ff83aef07af767fe0c95e7164677786daa3b46400bdee4e7717948b8f46ab',
  'scenario battery-weak-marrowby-dune.json, full round': '42b4a0e245e3f76d3db1f6acaeaa2e632ad2868c5bf6f2f1f6c4916ccc31e808',
  'scenario belt-slip-harlan-ridge.json, full round': '5f2294e3b71b5844732c71c3995cbd34d699145e492799d595efdc316b7aa2e2',
  'scenario bplus-high-resistance-ambry-hollow.json, full round': 'e929020191bf6bd4ed8de2f7290dba2c78882a2b507c5e4ee9ec06475f619fce',
  'scenario diode-open-tarrow-flats.json, full round': '6f2deb70210b6cffbad0d9967c192951584973691f48bffc341b1cc440cfe2d4',
  'scenario diode-shorted-pellmont-wren.json, full round': '5d44faf2db512a092bfeca0b1463a41f2710eb58476803030d9e03d1fd103c4b',
  'scenario field-open-orland-fen.json, full round': '49d9039e3e0fa74060eb61643d2a6c5249ddd639686dbb1145beb40c48d93aa3',
  'scenario fusible-link-open-westmark-drover.json, full round': '53277fdec8fcdc438a8d4bb632fb995957b89bcd3b27a87caca62700df5c5595',
  'scenario ground-high-resistance-silt-creek.json, full round': '095a94954fc6bd7d86f2a27086b36e72b154685c43af6ccb8f2f215ffdf4d2f0',
  'scenario healthy-control-corvane-linden.json, full round': 'ab3bd20aa6d59ba4e9fed923832745c5f1aed41a79019c717012134c9b3d745c',
  'scenario intermittent-bplus-pike-hollow.json, full round': '61dcf939c9819a0d110f17b144232a53a5c9c772d70f85e7bebe7f2feabeb435',
  'scenario key-off-draw-ellery-cross.json, full round': 'a997cea37382546c542231ce162cb4383f2b3452c1ba6fe4a0dfb997fb7608e0',
  'scenario post-corroded-fairlow-tern.json, full round': 'c682a03083685c65b6528caae934d5823d1fe027b33f016ac22d87ac4eb6edce',
  'scenario regulator-full-field-brackwater-mesa.json, full round': 'cd1e679c820211166293c40796cbf2c1375d79537e74e3a82d84a1a98f086bd2',
  'scenario regulator-set-high-redcourt-alder.json, full round': '32f5e65d062f769c40f5dd2bbf92acbf9b914886e1cbfde124af535851a3eb58',
  'scenario regulator-set-low-quillon-vale.json, full round': '10aa39817b665dc008994e154194269b9884d1050a0a89dccf2e2c342e0c2507',
  'scenario stator-phase-open-kestrel-bay.json, full round': 'd94f6ccc6c4eafd9f180b172a6ba0d0bfe60eb490a8e9818f24c9eb883a137da',
  'scenario weak-battery-and-draw-gannet-sound.json, full round': 'a42564032d8651fb2a41b477175321dfa2869e8e9e571356eec68f228424ab02',
  'scenario wrong-rating-dunmore-reach.json, full round': '50c17dfadc6e928f0ffdf0ba3386eb86768f4446d59bdb2f7ee7d9bb8cd2dcdb',
  'default car, fusible-link-open injected live, intermittent': 'b15eec2d6afdf547ce51f24c19fa8aaecb80d3d312558922dc59ea3103ab8299',
  'default car, diode-open injected live': 'c2104a86d45582877d550ad20acd39cd20f089957a1a82c61d4081ca0cdc2cb5',
  'default car, diode-shorted injected live': 'ddc9815b37b3b7f0dc79a944a75af73d006d63cd720c5e347c5f49be04d6aa29',
  'default car, stator-phase-open injected live, intermittent': 'bba0667b59d7748737bb1ebe7c2eaa1c936bd9cfcb22f51f8b7f1a6fec09bd1c',
  'default car, field-open injected live': '8fc3124354e2a42d2718ef8b217cde8ec2aeb005257ac6c7cc942bd4f7b76d4f',
  'default car, regulator-set-high injected live': 'd6dc1606310c9d3d4be06549fbc699869ccf1d2a81c42634644698ede9fddad9',
  'default car, regulator-set-low injected live, intermittent': '2091d68bc08537b0ee6bb4f59cad497dc171df0282bd9ef8b5e4e3727567358a',
  'default car, regulator-full-field injected live': 'e8f3aa8a397caef00acfc3131ed3f727a5a02282acc86cf987901898252ba6fa',
  'default car, belt-slip injected live': '7b0fe512c6780d1662a02708f280edd64b27f21516470b8691ba057c19edb00e',
  'default car, bplus-high-resistance injected live, intermittent': 'c62ba32fc3c9b6ad8ca656cda678972b915984892bf2a205f44b3d14927624fc',
  'default car, ground-high-resistance injected live': 'bd7ad698f22f75cad146705927d83c10d57549b4fbd35f50a73e802249b349e3',
  'default car, battery-weak injected live': '01491c953259b52cac962fc36d62fb17f6691c7f1e5f71c03b091d9d17cbfe82',
  'default car, key-off-draw injected live, intermittent': '4cb2d1ff5f27e50cbae6a0eda425e6f8ac3128d4ab07bedad215d249c28c7f4d',
  'default car, wrong-rating injected live': 'ab512d0108feec0c1d019f0c6e1d36b479f080a90426fef20dd3004370ddf740',
  'default car, post-corroded injected live': 'e510052e9be87fa43d220b1d15685fd00679b1a4659196b6fef55f9822457b8e',
  'three intermittent faults at once, one cleared and re-injected': '81ebec84073341b064137ac402e449ec3c194cf4feddcbb4e94a59b754ae15d9',
  'a fusible link blown by a heavy load': 'aaeea05d68b53313a99e99a7c784219da51ab513c14169b8c1dc1c0b369cc9f5',
  'the pile overheats, trips, cools and resets': '598f745a9febf0ad3b4a322cc68dc4ecd57d3956517aa7809b23d58a7ff64be5',
  'the series ammeter fuse blows with the key on': 'b98aa64a30ff6f1e393f8edb93c8277a411ac9451d36d8181c36e61bc3b9bfc7',
  'a flat weak battery stalls the crank, then a second try': 'ec182c5369c52f089a2bb0cac912e3ea34954e3a2429295d89993889e94a899d',
  'a slipping belt under heavy load and rpm changes': '61e66369308fe350ba92f0a6cb6353071164ef79092d405c8a792e7aa88cd172',
  'a regulator sensing B+': 'bfb7731d138a04d16dcb17735f65285aba5cfbef17f4412a24ab309e27e0e775',
  'an open sense line': '6eb79ad59e0b2ae8e9581d0f5e90c617a6ddba6821d6338988d15491f1e903a8',
  'full field with B+ removed at speed: the overvoltage cut-out': '479f584beb15296bafdd11b04f2bc906a027327b299041e602d5418f628cfbc6',
  'more than thirty faults (the uncached path)': '7474c87a31197dcfff8d943c0abfbfdd3bf3777d54cc1196233e363eb3543c09',
  'key off for ten minutes: modules sleep, surface charge settles': 'cf552875e06f569192466371bccba5efa30833434aadfb8b71aff7e551c2541f',
  'random attempt 0': '5f793c72393d4c179da049accd484d9fcc414a51158b3b255458da5caa58c6b2',
  'random attempt 1': 'ef2d4a30708f412c4a5a42a43fe7ec94d8adb4392eae2fb0151ff8bf0436b714',
  'random attempt 2': '5a3b49faf1fe1457945c60aca8813979100b7093695028e4894ec5748e1888cc',
  'random attempt 3': 'bbabb88e5a70aad60d9a2b768dbe21fbfbc64733d27bb013fdf961041cf26277',
  'random attempt 4': '6999f65c882dc134a197da20bdded5c102802872e05632387674a8c5570fd93d',
  'random attempt 5': '92fb73101a5a4e2277b086fb1e07a11120c6587e5aadb2d45000d42832f2dbbb',
  'random attempt 6': '47b991dcd293392f87dc7aec0ef9fd5c299f1fe7ed87e5963ec2cb4f7410b62b',
  'random attempt 7': '84f2f04d6b12cec39695e230daf88e7f8e0a144b5cbf4f1f8b31849bece163cc',
  'random attempt 8': 'ea9045934609b4d8e3dc9a735fa4ac1692a5951b1ba52edec8f6a8f522886cf3',
  'random attempt 9': '551c4e13616b598bf882689065d3ebacc41ba68e178254f70dec969b3d77110c',
  'random attempt 10': '014fd0eb7f705b16cf2b2af077991bcc91d1214b31b460466b194182d796a3bf',
  'random attempt 11': '7f73b8e80a88508ee8231aa3aa3b290e7e9225b336f609a95ebd21a2d39d651b',
  'bare step at 5, 20, 10 and 1 ms': '45a7f8db3f4e451144b8a33da0caa9012ece3ba79f528e5ac18a7bd7c3329a76',
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
