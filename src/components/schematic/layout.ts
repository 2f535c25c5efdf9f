/**
 * Where everything sits on the engine-bay schematic (SVG user units, 1000 × 540):
 * the connection points the voltmeter leads clip onto, the conductors the
 * clamp can close around (with the way "toward the battery" runs along each),
 * and the parking spots of the tester's leads. Plain geometry, no physics; the
 * wiring follows the model's network (docs/model.md): the vehicle loads hang
 * on the positive junction, on the battery side of the B+ cable and its link.
 */
import type { Conductor, ConnectionPoint } from '../../../sim/inputs.ts';

export const VIEW_W = 1000;
export const VIEW_H = 540;

export type Pt = readonly [number, number];

export const POINT_XY: Readonly<Record<ConnectionPoint, Pt>> = {
  'battery-pos': [120, 322],
  'battery-neg': [220, 322],
  'jump-pos': [100, 56],
  'jump-neg': [190, 56],
  'alt-bplus': [660, 196],
  'alt-case': [800, 166],
  'engine-ground': [560, 424],
  chassis: [440, 514],
};

export { CONDUCTOR_LABELS, CONDUCTOR_WORDS, POINT_LABELS, POINT_WORDS } from '../../../shared/bench-words.ts';

/** The positive junction: a bus from the jump post to the start of the B+ cable. */
export const JUNCTION = { x1: 86, x2: 340, y: 104 } as const;

/** The fusible link sits in the B+ cable right after the junction. */
export const FUSIBLE_LINK = { x1: 356, x2: 420, y: 104 } as const;

/** The vehicle loads' box, fed from the junction and returning through the body. */
export const LOADS_BOX = { x: 166, y: 146, w: 168, h: 96, tapX: 250, returnX: 322 } as const;

/** Each conductor's route, drawn from its battery end to its far end. */
export const CONDUCTOR_PATHS: Readonly<Record<Conductor, readonly Pt[]>> = {
  'battery-pos-cable': [
    [120, 322],
    [120, JUNCTION.y],
  ],
  'bplus-cable': [
    [JUNCTION.x2, JUNCTION.y],
    [610, JUNCTION.y],
    [610, 196],
    [660, 196],
  ],
  'battery-neg-cable': [
    [220, 322],
    [220, 298],
    [284, 298],
    [284, 514],
  ],
  'ground-strap': [
    [700, 514],
    [700, 450],
  ],
  'sense-line': [
    [108, 330],
    [48, 330],
    [48, 18],
    [760, 18],
    [760, 150],
  ],
};

/**
 * Where the clamp closes on each conductor and which way the battery lies
 * from there (a unit vector in drawing coordinates).
 */
export const CLAMP_SPOTS: Readonly<Record<Conductor, { at: Pt; towardBattery: Pt }>> = {
  'battery-pos-cable': { at: [120, 214], towardBattery: [0, 1] },
  'bplus-cable': { at: [610, 152], towardBattery: [0, -1] },
  'battery-neg-cable': { at: [284, 420], towardBattery: [0, -1] },
  'ground-strap': { at: [700, 482], towardBattery: [0, 1] },
  'sense-line': { at: [560, 18], towardBattery: [-1, 0] },
};

/** Where each conductor's name is written (start of the text, left-aligned unless `end`). */
export const CONDUCTOR_LABEL_AT: Readonly<Record<Conductor, { at: Pt; text: string; end?: boolean }>> = {
  'bplus-cable': { at: [482, 94], text: 'B+ cable' },
  'battery-pos-cable': { at: [112, 262], text: '+ cable', end: true },
  'battery-neg-cable': { at: [276, 478], text: '− cable', end: true },
  'ground-strap': { at: [722, 496], text: 'ground strap' },
  'sense-line': { at: [412, 36], text: 'regulator sense line' },
};

/** The tester: meter body, lead jacks, where unclipped leads hang. */
export const METER = { x: 830, y: 16, w: 150, h: 92 } as const;
export const JACKS = { red: [870, 108] as Pt, black: [940, 108] as Pt, clamp: [905, 108] as Pt } as const;
export const PARKED = { red: [872, 182] as Pt, black: [946, 182] as Pt, clamp: [908, 248] as Pt } as const;

/**
 * The radius (drawing units) of a touch target at least `cssPx` across when
 * the drawing is shown at `scale` CSS pixels per unit (WCAG 2.2, 2.5.8 target
 * size: 24 × 24 CSS px), never smaller than the drawn mark.
 */
export function targetRadius(scale: number, cssPx = 24, minUnits = 16): number {
  if (!(scale > 0)) return minUnits;
  return Math.max(minUnits, cssPx / 2 / scale);
}

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
