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
  'bench attempt, 10 minutes': '6947433aa4e539d062ae7187261d4d9058aaeeb52cb025302d7f5bb1de6eb50a',
  'bench attempt, 30 minutes, grading warm-up car': '4465b311c9178b5454e684630ac827591906ea7168bb748ba5221da3f57aef1d',
  'scenario battery-weak-marrowby-dune.json, full round': 'd0f0033d87024317bb63bda32b33d786fcc5441987bb7791d2facd456bfba754',
  'scenario belt-slip-harlan-ridge.json, full round': '0d7f4b21493e1f656cded9eee427b9d6df3fdb85a305f10ab1f5c0ebadd59488',
  'scenario bplus-high-resistance-ambry-hollow.json, full round': 'dbe4279027edef6f5032aadd4fb87a39960f7a94917ae8f441897a790c492ebb',
  'scenario diode-open-tarrow-flats.json, full round': '06d7433333a002e17b42d094d2e579b25bb079cc8f5f3ba1a9af45791e5d4c4a',
  'scenario diode-shorted-pellmont-wren.json, full round': '0cae1c437f1721b5c3998a765cbf8f5d17ef10a5fd1a723c5723b06079cbbf76',
  'scenario field-open-orland-fen.json, full round': '4ec6db6322f0c1e6ce7c64b34c39d15db651266a0ac0ca09ff204fe8014d9967',
  'scenario fusible-link-open-westmark-drover.json, full round': '4a1440f410985d911ff8b5ccc19f88ee372b258f130e00625d089a508f4124cb',
  'scenario ground-high-resistance-silt-creek.json, full round': 'cd6881e01a5f039d24c97a791c3b6f16c57b53802c62704e5f0912a04b9614ec',
  'scenario healthy-control-corvane-linden.json, full round': '5e5f90883e7352c097401f74cd029d8d367886c0d017edc8fead8c29d1b77767',
  'scenario intermittent-bplus-pike-hollow.json, full round': 'cb1589729732161b41571875b5e34f9635b4e0b51c2ff3f2003fbf224da573ea',
  'scenario key-off-draw-ellery-cross.json, full round': '90fda2e5bd009e67ec2128a491c8ca6dddcac66e413dead914514ae292c1746c',
  'scenario post-corroded-fairlow-tern.json, full round': 'fbf2a8d6288f27edaf4890943950e59ecb986cda6ede4bd3473d003ef381d56b',
  'scenario regulator-full-field-brackwater-mesa.json, full round': '9a549afee6dd07ca94089fd85d3e719d0e56121d6532f05ca6f4312faf2f3908',
  'scenario regulator-set-high-redcourt-alder.json, full round': '5e6acf708e4c1fdafcade08f36f2b020e6b571334fe744a1976f926701572e4c',
  'scenario regulator-set-low-quillon-vale.json, full round': 'fe62473d1d8daee1f45ee4ef98baeff28f25e57d7af65609ea32423a314d2f8f',
  'scenario stator-phase-open-kestrel-bay.json, full round': 'bd3bbef69cc1dc131e81be36b121fbe8ba3dc3a27c1574869df3479f095a087b',
  'scenario weak-battery-and-draw-gannet-sound.json, full round': 'ac082fa9f9bf1b05b04794a45ba76adc4090518dd546a1d3c0d41a3f6d80d901',
  'scenario wrong-rating-dunmore-reach.json, full round': 'a9815c62c51b35f0e91b2a45307c138a5c4656aa1017a89a7c39154554e8496c',
  'default car, fusible-link-open injected live, intermittent': '492ef98410ab99bccaeb534e7af7aa571d661b3dab400c1e7f0aad52753dbf1f',
  'default car, diode-open injected live': 'd4dea3fabe96069be5f3bc479a5518c194ad74fc34c2179ee89750ef7e4d875c',
  'default car, diode-shorted injected live': 'eb0935a73ef8f19f3095bb424ac88dabebea97abed01afa0c7cfa612a97fbe18',
  'default car, stator-phase-open injected live, intermittent': 'b31c323ed1e344d7a48dd46d4b4ee2ad3981a2f087124b237d89f8a2a7ad65b0',
  'default car, field-open injected live': '9eea6143780b6a66c4c8e0dcf1e42613ab9737c46cc004ea781ed320d65a37df',
  'default car, regulator-set-high injected live': '3c6fb278a1fa9d1028cfe00ff9d0cbf59cc3b7124c65fa0a07291e17ada59539',
  'default car, regulator-set-low injected live, intermittent': 'e2635e817a946fba4b6112fd599a9ea819c05377048612adac19fad5e3b2b310',
  'default car, regulator-full-field injected live': '122a7a18a59c8226a9827ecd0c04649d0307d4babe1b9887cf8befbacc4c2af5',
  'default car, belt-slip injected live': '53953b4051da4cda948b8ee2dbabc413850577178285eaeba9d3f8e81ca86695',
  'default car, bplus-high-resistance injected live, intermittent': 'bbf01d8ef60c4e8eefd14985f80e50816117f46a1dc86680b01fab109c114943',
  'default car, ground-high-resistance injected live': '81869de140a391fa54c22338670ce8e324d83389fc0f3392a524cee8916d5b74',
  'default car, battery-weak injected live': '4b24e5309bbad2630a1ae60aa89cc469c096471c257c940316b78f83af378e69',
  'default car, key-off-draw injected live, intermittent': '57ae16c80efd45d8d90655b086498372e59336133f97d5cd6a1909f53e3a17d8',
  'default car, wrong-rating injected live': '94ee5e33d5f0850c91c1868df63e9a13c3812201830841c93d8d7deb11bd2292',
  'default car, post-corroded injected live': '7b9eeb42b01eec71d1b504a05b0b39fca5ae61eb10ee9eba02a1e443ca4d6fcd',
  'three intermittent faults at once, one cleared and re-injected': 'f0d675a62c33ee221df5a920cd130920ff701961ea6a244d3de4420a2b3ff875',
  'a fusible link blown by a heavy load': 'e90fc6e8854cfa90d5fc0aafac5edff5b3a57efd9f134d2c1e4e16fc736d971a',
  'the pile overheats, trips, cools and resets': 'bd9103d43758e77a0db8ed5fbfde7773f69d5143eb68a5da498ac047c1faa928',
  'the series ammeter fuse blows with the key on': 'a5bb8408c81be0d5be561fac161ef637db2b36c23444b73eed343750f9a521b9',
  'a flat weak battery stalls the crank, then a second try': '2ef5d8d3ba978bab05d04500a78fc421687608c713718ab7171ca276013a739c',
  'a slipping belt under heavy load and rpm changes': 'a8bc48e09af75ebec0d822744824d0616f80be0611e62910e91a394ba5d45345',
  'a regulator sensing B+': '5cffc58ecee6c345c4869694ed0d37b484a05987a302deb61f86dca079bbb526',
  'an open sense line': 'a5f6a7a4138d113609c119bb0ed696203fdd8fd92d10236d57e2877a33d6b175',
  'full field with B+ removed at speed: the overvoltage cut-out': '929bea709885607031022850cb3a55cdc6b328f0dd824521005c78df43a3933b',
  'more than thirty faults (the uncached path)': 'c96fd0055f5f4a129b34a8d41e408bec7e5826c7d9c2c0da638a8c0fa62e135e',
  'key off for ten minutes: modules sleep, surface charge settles': 'dc512fa20b30182750ddc5cce860b796dfb0dcf518286b9299a030ece9a59297',
  'random attempt 0': 'eff5befecb7cd230a7ed420669018530266c1ce9918a0789641f992e5c237b7f',
  'random attempt 1': '4e88a019c9fad8eca21ab54a9a1198ad35f58caa5b4911253bcfefd30e5fd450',
  'random attempt 2': '48d930d7c7f48191755c8e1b0eef34b8853159ca10c8e8b5fbe11d29b52e3619',
  'random attempt 3': 'e1c4037cc5286f540489378c8392853d8b03edc89f0685d5c2e0ee8450010a1b',
  'random attempt 4': '82faf7e788ea3bce2d976cec8facc4936e8e40c4bed57cc7fa89ef3940fa335e',
  'random attempt 5': '8f9e18c1a1ef17c6ac8f1d98fe491a67ee356ddb88fb2450bcbad815dfea5179',
  'random attempt 6': '4194c61459c0f8c5e64abd1d6e140826dc17b0864386f7652ac929b5eb85b1e0',
  'random attempt 7': '1163d6995593ba6a84b69fa18c5b59ae2b185d6e8affb629cc0d8e6145fca7d8',
  'random attempt 8': '6bca7ff1a5241fd0648020da2b66be89bf7550c05d2e3b320da838631a1afd08',
  'random attempt 9': 'bbfe147c499da84ac42897413d887175d77ca030bfd891937b59d64f6df81225',
  'random attempt 10': 'd26dec013ca4b07cf1769c3f5288e9fb3ebe8d45c517de4a3af65377476a2b68',
  'random attempt 11': '9c7730d9c0627beaa5ce034d2c152dbecd7c12a9f9c2f6b5e6d8c0e1ce4b06f0',
  'bare step at 5, 20, 10 and 1 ms': 'd7f900ae6efc030a779d91716d3821c5110200962c6de21f9c269efeaa16e486',
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
