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
  'bench attempt, 10 minutes': 'e320740d0534d265d8646598c200a53e7d056c3740907826695ea2aa817d282b',
  'bench attempt, 30 minutes, grading warm-up car': 'a2946c2a4c293662d2be6e60637c91133083877fc11f7cd4a8f1bdc2c49fe0b1',
  'scenario battery-weak-marrowby-dune.json, full round': '0779a86e35b12777c3c83a737678008ccf66c55c1cb2c5c29727a2488055f1bc',
  'scenario belt-slip-harlan-ridge.json, full round': '988d9960606a5acc93bf745b76f74682a79c674bae72867e74ac5d093eee9f2e',
  'scenario bplus-high-resistance-ambry-hollow.json, full round': '0b5f5c1f8d9cd37409caa5e1ce8e07658c001d6c80d320b09feaad9b03b00a7c',
  'scenario diode-open-tarrow-flats.json, full round': 'ad5a72ec1cb3c8a3fa32723d204240a73a65a09a18661ebbf2cdd89384377984',
  'scenario diode-shorted-pellmont-wren.json, full round': 'ccbc68b2e3daa623454bb99abcaf58bb24aab11a2dbd263bc643e1e204b6ba4b',
  'scenario field-open-orland-fen.json, full round': '9a7971c4415fb1478f82702ad6077e2422d4e948443319eaf6053bdf5ee31516',
  'scenario fusible-link-open-westmark-drover.json, full round': '52d102d9c95f32552413ed0567c1ceced221574cfa7d71333f99f41258e8bf3c',
  'scenario ground-high-resistance-silt-creek.json, full round': '358a5eb1bd5c52f1ce747b1004efd3dfbd3f2fa751ef251e058d8ca537222ee7',
  'scenario healthy-control-corvane-linden.json, full round': '2851af3e8574aae594d1875e3364bfb6a3e8c32b71b28ae76b4e4655730a61ad',
  'scenario intermittent-bplus-pike-hollow.json, full round': 'bffbf4d8a658ed0c3b86d43a0cb7e80f8da523b2fe11980e0b0843bc537587eb',
  'scenario key-off-draw-ellery-cross.json, full round': 'fb272aa37b322c5ee8a95b98825ec352c82bd4012cb48343b5e7c2af1f1dc5db',
  'scenario post-corroded-fairlow-tern.json, full round': 'a10d62ef275eb14e310b87797b4e245e7291ccf35a9ba97cb50436da1197c662',
  'scenario regulator-full-field-brackwater-mesa.json, full round': '4930e24890950fa17da238d9e45f9e79bf487ef6a3e1681971d466b98042b168',
  'scenario regulator-set-high-redcourt-alder.json, full round': 'e644108e96164c8b9cd2c39e47c0c1a9f3918295f2c485aa123a2c302e1b3cb8',
  'scenario regulator-set-low-quillon-vale.json, full round': '1f8d84065239b27f5593a3fafbfbf410dc82451d4c6111cabbe09bebb2005719',
  'scenario stator-phase-open-kestrel-bay.json, full round': '066922b44ab2f762993e6f64f64b6e1128406c3eecb181a6abbfe275db628b73',
  'scenario weak-battery-and-draw-gannet-sound.json, full round': '306b29e1e0f874954736e0912b21b15e90328b05b2fea1581a4f3237df768859',
  'scenario wrong-rating-dunmore-reach.json, full round': 'b8c65456a8d74cc4a27e4e818a91c24202a0c670c3a6690399460522d5594059',
  'default car, fusible-link-open injected live, intermittent': '55dd469fcc762a61ea8d28b364b6dada47f462127c9d2478e3f6188e4f0124cf',
  'default car, diode-open injected live': 'a27a0f31d63971dd7bfd46a87b5e7de9da7319559877790c20a100875d203c77',
  'default car, diode-shorted injected live': 'd620f582e817e5f042623c0c055e7813c4ff7088dffe2610ce68411935dc105a',
  'default car, stator-phase-open injected live, intermittent': '28709ba9785f5558546bd07934cc21b39e0e136f2c094983366cea7a331d6390',
  'default car, field-open injected live': '1ffd7852e71bcb6d63400d6d23418be479ed5111deded4f98ba55f308169a0ab',
  'default car, regulator-set-high injected live': '8fd74701439df93013efe768ed08f81eb7a8b73a5e268aef43a1f4d3ad54f44a',
  'default car, regulator-set-low injected live, intermittent': '530b51261b861a1d1798338296c1d82bdb73b572424146ab3795d4a87cef64a1',
  'default car, regulator-full-field injected live': 'b9f6b4ac50cc0fa093f3408a3e8021db211b5e80790d86d2043570e9583a7196',
  'default car, belt-slip injected live': '901c621e4969f9823c79ee01477c104b6abc325d89ccfc6bcd8394e6f938c327',
  'default car, bplus-high-resistance injected live, intermittent': '9e9cf773c355c2003fd184ffa493e00d2c758756415045234766a2154145de13',
  'default car, ground-high-resistance injected live': 'f6b6cb4b821e78798022b56059d3b9105c03f6cc68dcdfcbc51ec71407b81b9e',
  'default car, battery-weak injected live': '8287d0627b4240a01a9f17eeeff6f3068ff2e43a2db2bbd8ef95075b2816f225',
  'default car, key-off-draw injected live, intermittent': '6ae6a6f23c91d94082a168f31a4c96aea9247ec72ff9e3c8faad6278f5acbd05',
  'default car, wrong-rating injected live': '43da947b1138f839f3bba18ccafffe540975786f2099b50a526bbcbcf372df41',
  'default car, post-corroded injected live': '2aa2fbaf3db3e5426c147b0c42b3dda4bc9ab4d0c7177e2b6c3584b1a4333787',
  'three intermittent faults at once, one cleared and re-injected': '696693578696b250602a54faf1fed20d848948a45529266ba7d7f280b26b0d71',
  'a fusible link blown by a heavy load': '72f330c40bc93e428ba23ee2737002aadbf625f49d57d7bfcdad12a8e7e5e9ec',
  'the pile overheats, trips, cools and resets': '9c90f11ceb0dfd8953097a7f8731797c30af385ef0df34c9274c0d09294be8ac',
  'the series ammeter fuse blows with the key on': 'ec3349f6ccd0b1947b3e1bc92a7b17ca732f9e2d1ddf7f817738240acfd2a43d',
  'a flat weak battery stalls the crank, then a second try': 'f11a1acbfbdba41f89e67a6836f90cd42a8d37177ac262bc95ed41c5c297142f',
  'a slipping belt under heavy load and rpm changes': 'd8682b38cff881826f13cd93f853c937884b23a8b0087396a27c9dc7839391e2',
  'a regulator sensing B+': '4960bb512ae29b88d6da397d34109cacfc847eb7edc62773cbaa6365fb4c8153',
  'an open sense line': 'b7142ca2fff13d63bbff568b32e63538f9256802b03cb9f423b5e9d26ae706f4',
  'full field with B+ removed at speed: the overvoltage cut-out': 'c480b91a71f244d530013c6011eaa1828daa6bee02e77432f533cadcc2431de7',
  'more than thirty faults (the uncached path)': '90fcb89d5818b287364f864d45e6967a7428b094d999e6bc99c137a6946a968c',
  'key off for ten minutes: modules sleep, surface charge settles': 'b85e06438dce6472865f14fa499a092672195c2b7ef92b4e394938548fadffd1',
  'random attempt 0': 'cddb951b11dcf3a195ef631a25e114a1cb187fdc81968763786d9519fdc3036f',
  'random attempt 1': '09086c50145da15533bc2c668408e006918b6d6977bef5878bb0f75f8e865dd2',
  'random attempt 2': 'b1c90e91c31f829af057b99bebfa1b78875eed13d3b67e44f5b389b7458eab33',
  'random attempt 3': 'cd3f95bc40b2cdd240edf7c2d5edbef676931141c3a6b2784ba7d3f5f620840d',
  'random attempt 4': 'd01811f037854c47c7dd48cf2c1ae61628a7c7c91b25ec82681e9aac4e3cd8e4',
  'random attempt 5': '87f5c449624fbd3c3138b095880c8f94abcb1ff79f682adc47c28404377d130a',
  'random attempt 6': 'f71d196f17072095e6a22c9ad31d117c8f377501d4c3d5cc62998b5190e79376',
  'random attempt 7': '03b933e5328096f56035a11e6c7a1c609e3da918d2510cdbe0bf553374e04a7e',
  'random attempt 8': '2c90069caef83a5454bed9b83acc6d625de82045e010cc2b3e96dc93a044e75d',
  'random attempt 9': '227a589bdade99cd168c3273d20a44dd88a87addb1963ac498eb1fd0b17ad3ed',
  'random attempt 10': '086a968f8e6b404af0a109213737cfa374abb617236ee1e5934c35c22c81bd0a',
  'random attempt 11': 'a614939884163c524cf43f78bbdc8b5fd49e1db982b0b5d1951859b30db0a11e',
  'bare step at 5, 20, 10 and 1 ms': '60e2eb95a373ff54ffc0c223f78df046f2e258864a36c0513ad4218edf7046ca',
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
