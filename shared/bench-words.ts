/**
 * Names of the bench's connection points and conductors, for people: as a
 * label ("Battery positive post") and inside a sentence ("red on the battery
 * positive post"). The model's own identifiers never reach a screen or an
 * export.
 */
import type { Conductor, ConnectionPoint } from '../sim/inputs.ts';

export const POINT_LABELS: Readonly<Record<ConnectionPoint, string>> = {
  'battery-pos': 'Battery positive post',
  'battery-neg': 'Battery negative post',
  'jump-pos': 'Remote jump post, positive',
  'jump-neg': 'Remote jump post, ground',
  'alt-bplus': 'Alternator B+ stud',
  'alt-case': 'Alternator case',
  'engine-ground': 'Engine block',
  chassis: 'Body (chassis) ground',
};

export const POINT_WORDS: Readonly<Record<ConnectionPoint, string>> = {
  'battery-pos': 'the battery positive post',
  'battery-neg': 'the battery negative post',
  'jump-pos': 'the remote jump post (positive)',
  'jump-neg': 'the remote jump post (ground)',
  'alt-bplus': 'the alternator B+ stud',
  'alt-case': 'the alternator case',
  'engine-ground': 'the engine block',
  chassis: 'the body (chassis) ground',
};

export const CONDUCTOR_LABELS: Readonly<Record<Conductor, string>> = {
  'bplus-cable': 'B+ cable (alternator output)',
  'battery-pos-cable': 'Battery positive cable',
  'battery-neg-cable': 'Battery negative cable',
  'ground-strap': 'Engine ground strap',
  'sense-line': 'Regulator sense line',
};

export const CONDUCTOR_WORDS: Readonly<Record<Conductor, string>> = {
  'bplus-cable': 'the B+ cable',
  'battery-pos-cable': 'the battery positive cable',
  'battery-neg-cable': 'the battery negative cable',
  'ground-strap': 'the engine ground strap',
  'sense-line': 'the regulator sense line',
};
