/** Vitest setup file: pins fast-check's seed for the file and prints it (see fast-check-seed.ts). */
import { FC_SEED, PINNED_FC_SEED } from './fast-check-seed.ts';

console.log(`fast-check seed ${FC_SEED}${FC_SEED === PINNED_FC_SEED ? ' (pinned)' : ''}; set LOADLINE_FC_SEED to change it`);
