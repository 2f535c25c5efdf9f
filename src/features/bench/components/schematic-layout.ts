/**
 * Where everything sits on the engine-bay schematic (SVG user units, 1000 × 540):
 * the connection points the voltmeter leads clip onto, the conductors the
 * clamp can close around (with the way "toward the battery" runs along each),
 * and the parking spots of the tester's leads. Plain geometry, no physics.
 */
import type { Conductor, ConnectionPoint } from '../../../../sim/inputs.ts';

export const VIEW_W = 1000;
export const VIEW_H = 540;

export type Pt = readonly [number, number];

export const POINT_XY: Readonly<Record<ConnectionPoint, Pt>> = {
  'battery-pos': [130, 330],
  'battery-neg': [230, 330],
  'jump-pos': [120, 78],
  'jump-neg': [210, 78],
  'alt-bplus': [646, 196],
  'alt-case': [790, 256],
  'engine-ground': [560, 428],
  chassis: [380, 505],
};

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

export const CONDUCTOR_LABELS: Readonly<Record<Conductor, string>> = {
  'bplus-cable': 'B+ charging cable',
  'battery-pos-cable': 'Battery positive cable',
  'battery-neg-cable': 'Battery negative cable',
  'ground-strap': 'Engine ground strap',
  'sense-line': 'Regulator sense line',
};

/** Each conductor's route, drawn from its battery end to its far end. */
export const CONDUCTOR_PATHS: Readonly<Record<Conductor, readonly Pt[]>> = {
  'battery-pos-cable': [
    [130, 330],
    [130, 92],
  ],
  'bplus-cable': [
    [250, 78],
    [600, 78],
    [600, 196],
    [646, 196],
  ],
  'battery-neg-cable': [
    [230, 330],
    [230, 300],
    [290, 300],
    [290, 505],
  ],
  'ground-strap': [
    [700, 505],
    [700, 450],
  ],
  'sense-line': [
    [118, 318],
    [70, 318],
    [70, 26],
    [740, 26],
    [740, 138],
  ],
};

/**
 * Where the clamp closes on each conductor and which way the battery lies
 * from there (a unit vector in drawing coordinates).
 */
export const CLAMP_SPOTS: Readonly<Record<Conductor, { at: Pt; towardBattery: Pt }>> = {
  'battery-pos-cable': { at: [130, 220], towardBattery: [0, 1] },
  'bplus-cable': { at: [600, 140], towardBattery: [0, -1] },
  'battery-neg-cable': { at: [290, 420], towardBattery: [0, -1] },
  'ground-strap': { at: [700, 480], towardBattery: [0, 1] },
  'sense-line': { at: [420, 26], towardBattery: [-1, 0] },
};

/** The fusible link sits in the B+ cable near the junction. */
export const FUSIBLE_LINK = { x1: 300, x2: 372, y: 78 } as const;

/** The tester: meter body, lead jacks, where unclipped leads hang. */
export const METER = { x: 830, y: 16, w: 150, h: 96 } as const;
export const JACKS = { red: [870, 112] as Pt, black: [940, 112] as Pt, clamp: [905, 112] as Pt } as const;
export const PARKED = { red: [868, 176] as Pt, black: [942, 176] as Pt, clamp: [905, 236] as Pt } as const;

/** The nearest connection point within `radius` of (x, y), or null. */
export function nearestPoint(x: number, y: number, radius = 30): ConnectionPoint | null {
  let best: ConnectionPoint | null = null;
  let bestD = radius;
  for (const [name, [px, py]] of Object.entries(POINT_XY) as [ConnectionPoint, Pt][]) {
    const d = Math.hypot(px - x, py - y);
    if (d <= bestD) {
      best = name;
      bestD = d;
    }
  }
  return best;
}

function distanceToSegment(x: number, y: number, a: Pt, b: Pt): number {
  const [ax, ay] = a;
  const [bx, by] = b;
  const dx = bx - ax;
  const dy = by - ay;
  const len2 = dx * dx + dy * dy;
  const t = len2 === 0 ? 0 : Math.max(0, Math.min(1, ((x - ax) * dx + (y - ay) * dy) / len2));
  return Math.hypot(ax + t * dx - x, ay + t * dy - y);
}

/** The nearest conductor within `radius` of (x, y), measured to its drawn route, or null. */
export function nearestConductor(x: number, y: number, radius = 24): Conductor | null {
  let best: Conductor | null = null;
  let bestD = radius;
  for (const [name, route] of Object.entries(CONDUCTOR_PATHS) as [Conductor, readonly Pt[]][]) {
    for (let i = 1; i < route.length; i++) {
      const d = distanceToSegment(x, y, route[i - 1]!, route[i]!);
      if (d <= bestD) {
        best = name;
        bestD = d;
      }
    }
  }
  return best;
}
