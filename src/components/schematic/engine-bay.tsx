/**
 * The engine bay as a schematic, drawn from one plain description of the
 * bench at a moment (where the leads and the clamp are, the switches, the
 * link, the lamp, the pile's heat). The live bench adds its handles and
 * drop targets; the replay shows the same drawing, read-only.
 *
 * Battery, remote jump posts and the positive junction (fuse box) with the
 * vehicle loads, the B+ cable with its fusible link, the alternator with its
 * B+ stud and case, the ground strap, the engine block, the body, the carbon
 * pile across the posts and the tester's leads.
 */
import { memo, type ReactNode, type Ref, type SVGProps } from 'react';
import { curveBasis, line } from 'd3-shape';
import type { ClampArrow, ConnectionPoint, Conductor, Controls } from '../../../sim/inputs.ts';
import {
  CLAMP_SPOTS,
  CONDUCTOR_LABEL_AT,
  CONDUCTOR_PATHS,
  CONDUCTOR_WORDS,
  FUSIBLE_LINK,
  JACKS,
  JUNCTION,
  LOADS_BOX,
  METER,
  PARKED,
  POINT_WORDS,
  POINT_XY,
  VIEW_H,
  VIEW_W,
  type Pt,
} from './layout.ts';

/** What the drawing shows: the bench at one moment. */
export interface BayState {
  red: ConnectionPoint | null;
  black: ConnectionPoint | null;
  conductor: Conductor | null;
  arrow: ClampArrow;
  ammeter: boolean;
  bplus: boolean;
  /** Ids of the accessories switched on, joined with commas (a plain value for shallow comparison). */
  accessoriesOn: string;
  /** The fusible link is drawn open (on the live bench: only when it burnt open there). */
  linkOpen: boolean;
  lamp: boolean;
  pileHot: boolean;
  pileOver: boolean;
}

/** The lamp and the pile's heat, as the drawing shows them. */
export interface BayReadings {
  chargeWarning: boolean;
  pileHot: boolean;
  pileOverheated: boolean;
}

/**
 * The drawing's state from the bench's controls and readings, the same way on
 * the live bench and in the replay. `linkOpen`: the link burnt open during the
 * attempt (the live bench: on that bench).
 */
export function bayStateOf(controls: Controls, linkOpen: boolean, readings: BayReadings): BayState {
  return {
    red: controls.leads.red,
    black: controls.leads.black,
    conductor: controls.clamp.conductor,
    arrow: controls.clamp.arrow,
    ammeter: controls.ammeterInSeries,
    bplus: controls.bplusConnected,
    accessoriesOn: controls.accessoriesOn.join(','),
    linkOpen,
    lamp: readings.chargeWarning,
    pileHot: readings.pileHot,
    pileOver: readings.pileOverheated,
  };
}

export type LeadTool = 'red' | 'black' | 'clamp';

const polyline = line<Pt>()
  .x((p) => p[0])
  .y((p) => p[1]);
const sagging = line<Pt>()
  .x((p) => p[0])
  .y((p) => p[1])
  .curve(curveBasis);

const pathOf = (pts: readonly Pt[]) => polyline([...pts]) ?? '';

/** A tester lead from its jack to where it ends, sagging under its own weight. */
export function leadPath(from: Pt, to: Pt): string {
  const mid: Pt = [(from[0] + to[0]) / 2, Math.max(from[1], to[1]) + 40 + Math.abs(from[0] - to[0]) * 0.08];
  return sagging([from, [from[0], from[1] + 24], mid, to]) ?? '';
}

/** The hook-up in words, for the drawing's accessible name. */
export function describeHookup(h: BayState): string {
  const lead = (c: string, p: ConnectionPoint | null) => `${c} lead ${p ? `on ${POINT_WORDS[p]}` : 'not connected'}`;
  const clamp = h.conductor ? `clamp on ${CONDUCTOR_WORDS[h.conductor]}, arrow ${h.arrow === 'toward-battery' ? 'toward the battery' : 'toward the alternator'}` : 'clamp not on a cable';
  const extras = [h.ammeter ? 'series ammeter fitted at the battery negative' : '', h.bplus ? '' : 'B+ lead removed from the alternator', h.linkOpen ? 'the fusible link is open' : '']
    .filter(Boolean)
    .join('; ');
  return `Engine bay schematic: ${lead('red', h.red)}; ${lead('black', h.black)}; ${clamp}${extras ? `; ${extras}` : ''}.`;
}

function Ground({ x, y }: { x: number; y: number }) {
  return (
    <g className="stroke-slate-500" strokeWidth={2}>
      <line x1={x - 12} y1={y} x2={x + 12} y2={y} />
      <line x1={x - 8} y1={y + 5} x2={x + 8} y2={y + 5} />
      <line x1={x - 4} y1={y + 10} x2={x + 4} y2={y + 10} />
    </g>
  );
}

const ALT: Pt = [720, 200];
const ALT_R = 60;
const ALT_PULLEY_R = 20;
const CRANK: Pt = [880, 362];
const CRANK_R = 28;

/** The belt's two straight runs, tangent to both pulleys (outer tangents). */
function beltPath(): string {
  const [ax, ay] = ALT;
  const [cx, cy] = CRANK;
  const d = Math.hypot(cx - ax, cy - ay);
  const ux = (cx - ax) / d;
  const uy = (cy - ay) / d;
  const k = (CRANK_R - ALT_PULLEY_R) / d;
  return [1, -1]
    .map((side) => {
      const sn = side * Math.sqrt(1 - k * k);
      const nx = ux * -k - uy * sn;
      const ny = ux * sn + uy * -k;
      return `M ${ax + nx * ALT_PULLEY_R} ${ay + ny * ALT_PULLEY_R} L ${cx + nx * CRANK_R} ${cy + ny * CRANK_R}`;
    })
    .join(' ');
}
const BELT_PATH = beltPath();

const LABEL = 'fill-slate-600 stroke-none text-[13px]';
const NAME = 'fill-slate-700 stroke-none text-[15px] font-semibold';

/** Everything that never changes during an attempt. */
const StaticBay = memo(function StaticBay() {
  return (
    <g>
      {/* Body (chassis) */}
      <line x1={30} y1={514} x2={970} y2={514} className="stroke-slate-500" strokeWidth={6} strokeLinecap="round" />
      <text x={34} y={536} className={LABEL}>
        body (chassis) ground
      </text>
      {/* Battery */}
      <rect x={80} y={334} width={180} height={106} rx={8} className="fill-slate-100 stroke-slate-600" strokeWidth={2} />
      <rect x={108} y={324} width={24} height={10} rx={2} className="fill-slate-500" />
      <rect x={208} y={324} width={24} height={10} rx={2} className="fill-slate-500" />
      <text x={120} y={362} textAnchor="middle" className="fill-slate-700 text-[22px] font-semibold">
        +
      </text>
      <text x={220} y={362} textAnchor="middle" className="fill-slate-700 text-[22px] font-semibold">
        −
      </text>
      <text x={170} y={414} textAnchor="middle" className={NAME}>
        Battery 12 V
      </text>
      {/* Remote jump posts: the positive one on the junction, the ground one on the body */}
      <line x1={POINT_XY['jump-pos'][0]} y1={POINT_XY['jump-pos'][1]} x2={POINT_XY['jump-pos'][0]} y2={JUNCTION.y} className="stroke-stop-700" strokeWidth={5} />
      <line x1={POINT_XY['jump-neg'][0]} y1={POINT_XY['jump-neg'][1]} x2={POINT_XY['jump-neg'][0]} y2={74} className="stroke-slate-500" strokeWidth={3} />
      <Ground x={POINT_XY['jump-neg'][0]} y={74} />
      <text x={POINT_XY['jump-pos'][0] + 16} y={POINT_XY['jump-pos'][1] + 5} className={LABEL}>
        jump +
      </text>
      <text x={POINT_XY['jump-neg'][0] + 16} y={POINT_XY['jump-neg'][1] + 5} className={LABEL}>
        jump −
      </text>
      {/* Positive junction (fuse box) and the vehicle loads it feeds */}
      <line x1={JUNCTION.x1} y1={JUNCTION.y} x2={JUNCTION.x2} y2={JUNCTION.y} className="stroke-stop-700" strokeWidth={7} strokeLinecap="round" />
      <text x={136} y={126} className={LABEL}>
        junction · fuse box
      </text>
      <line x1={LOADS_BOX.tapX} y1={JUNCTION.y} x2={LOADS_BOX.tapX} y2={LOADS_BOX.y} className="stroke-slate-500" strokeWidth={3} />
      <rect x={LOADS_BOX.x} y={LOADS_BOX.y} width={LOADS_BOX.w} height={LOADS_BOX.h} rx={6} className="fill-white stroke-slate-400" strokeWidth={1.5} />
      <text x={LOADS_BOX.x + LOADS_BOX.w / 2} y={LOADS_BOX.y + 22} textAnchor="middle" className="fill-slate-700 stroke-none text-[14px] font-medium">
        Vehicle loads
      </text>
      <path d={`M ${LOADS_BOX.returnX} ${LOADS_BOX.y + LOADS_BOX.h} V 514`} className="stroke-slate-400" strokeWidth={2.5} fill="none" />
      {/* Engine block and starter */}
      <rect x={520} y={300} width={410} height={150} rx={12} className="fill-stone-200 stroke-slate-500" strokeWidth={2} />
      <text x={916} y={438} textAnchor="end" className={NAME}>
        Engine block
      </text>
      <text x={POINT_XY['engine-ground'][0] + 18} y={POINT_XY['engine-ground'][1] + 5} className={LABEL}>
        block ground
      </text>
      <rect x={590} y={322} width={86} height={40} rx={5} className="fill-white stroke-slate-400" strokeWidth={1.5} />
      <text x={633} y={347} textAnchor="middle" className={LABEL}>
        starter
      </text>
      {/* Alternator and its mounting */}
      <line x1={ALT[0]} y1={ALT[1] + ALT_R} x2={ALT[0]} y2={300} className="stroke-slate-500" strokeWidth={8} />
      <line x1={774} y1={174} x2={POINT_XY['alt-case'][0]} y2={POINT_XY['alt-case'][1]} className="stroke-slate-500" strokeWidth={6} strokeLinecap="round" />
      <line x1={760} y1={246} x2={790} y2={300} className="stroke-slate-500" strokeWidth={5} />
      <circle cx={ALT[0]} cy={ALT[1]} r={ALT_R} className="fill-white stroke-slate-600" strokeWidth={2.5} />
      <circle cx={ALT[0]} cy={ALT[1]} r={ALT_PULLEY_R} className="fill-stone-100 stroke-slate-400" strokeWidth={1.5} />
      <text x={ALT[0]} y={ALT[1] - 32} textAnchor="middle" className="fill-slate-700 stroke-none text-[14px] font-semibold">
        Alternator
      </text>
      <text x={POINT_XY['alt-bplus'][0] + 14} y={POINT_XY['alt-bplus'][1] + 5} className="fill-slate-800 stroke-none text-[14px] font-bold">
        B+
      </text>
      <text x={POINT_XY['alt-case'][0] + 14} y={POINT_XY['alt-case'][1] + 18} className={LABEL}>
        case
      </text>
      {/* Belt from the crank pulley to the alternator pulley */}
      <path d={BELT_PATH} className="stroke-slate-400" strokeWidth={3} fill="none" />
      <circle cx={CRANK[0]} cy={CRANK[1]} r={CRANK_R} className="fill-stone-100 stroke-slate-500" strokeWidth={2} />
      <text x={CRANK[0] - CRANK_R - 8} y={CRANK[1] + 5} textAnchor="end" className={LABEL}>
        crank pulley
      </text>
      {/* Tester meter body */}
      <rect x={METER.x} y={METER.y} width={METER.w} height={METER.h} rx={10} className="fill-slate-800" />
      <text x={METER.x + METER.w / 2} y={METER.y + 24} textAnchor="middle" className="fill-slate-200 text-[13px] font-medium">
        tester
      </text>
      <circle cx={JACKS.red[0]} cy={JACKS.red[1] - 12} r={6} className="fill-stop-600" />
      <circle cx={JACKS.clamp[0]} cy={JACKS.clamp[1] - 12} r={6} className="fill-slate-400" />
      <circle cx={JACKS.black[0]} cy={JACKS.black[1] - 12} r={6} className="fill-slate-950 stroke-slate-400" />
    </g>
  );
});

function Cables({ s, highlight }: { s: BayState; highlight: Conductor | 'all' | null }) {
  const lit = (c: Conductor) => highlight === 'all' || highlight === c;
  const bplus = CONDUCTOR_PATHS['bplus-cable'];
  const end = bplus[bplus.length - 1]!;
  const lifted: Pt = [end[0] - 24, end[1] - 26];
  const bplusRoute: Pt[] = s.bplus ? [...bplus] : [...bplus.slice(0, -1), lifted];
  return (
    <g fill="none" strokeLinejoin="round" strokeLinecap="round">
      {/* While the clamp is in hand, every conductor it can close on glows. */}
      {highlight !== null &&
        (Object.keys(CONDUCTOR_PATHS) as Conductor[]).map((c) =>
          lit(c) ? <path key={c} d={pathOf(CONDUCTOR_PATHS[c])} className={highlight === c ? 'stroke-live-300' : 'stroke-live-100'} strokeWidth={highlight === c ? 22 : 16} data-clamp-place={c} /> : null,
        )}
      <path d={pathOf(CONDUCTOR_PATHS['battery-pos-cable'])} className="stroke-stop-700" strokeWidth={6} />
      {/* The B+ cable with the fusible link in it */}
      <path d={pathOf([bplusRoute[0]!, [FUSIBLE_LINK.x1, FUSIBLE_LINK.y]])} className="stroke-stop-700" strokeWidth={5} />
      <path d={pathOf([[FUSIBLE_LINK.x2, FUSIBLE_LINK.y], ...bplusRoute.slice(1)])} className="stroke-stop-700" strokeWidth={5} />
      {s.linkOpen ? (
        <g data-testid="fusible-link-open">
          <path d={`M ${FUSIBLE_LINK.x1} ${FUSIBLE_LINK.y} l 20 -3 l 6 -8`} className="stroke-stop-600" strokeWidth={3} />
          <path d={`M ${FUSIBLE_LINK.x2} ${FUSIBLE_LINK.y} l -20 3 l -6 8`} className="stroke-stop-600" strokeWidth={3} />
          <text x={(FUSIBLE_LINK.x1 + FUSIBLE_LINK.x2) / 2} y={FUSIBLE_LINK.y - 14} textAnchor="middle" className="fill-stop-700 stroke-none text-[13px] font-semibold">
            link open
          </text>
        </g>
      ) : (
        <g>
          <path d={`M ${FUSIBLE_LINK.x1} ${FUSIBLE_LINK.y} h ${FUSIBLE_LINK.x2 - FUSIBLE_LINK.x1}`} className="stroke-warn-500" strokeWidth={3} strokeDasharray="3 2" />
          <text x={(FUSIBLE_LINK.x1 + FUSIBLE_LINK.x2) / 2} y={FUSIBLE_LINK.y - 12} textAnchor="middle" className={LABEL}>
            fusible link
          </text>
        </g>
      )}
      {!s.bplus && (
        <text x={lifted[0] + 20} y={lifted[1] - 16} className="fill-warn-700 stroke-none text-[13px] font-semibold">
          B+ lead off
        </text>
      )}
      <path d={pathOf(CONDUCTOR_PATHS['battery-neg-cable'])} className="stroke-slate-900" strokeWidth={6} />
      {s.ammeter && (
        <g>
          <circle cx={252} cy={298} r={16} className="fill-white stroke-slate-800" strokeWidth={2} />
          <text x={252} y={303} textAnchor="middle" className="fill-slate-800 stroke-none text-[13px] font-semibold">
            mA
          </text>
        </g>
      )}
      <path d={pathOf(CONDUCTOR_PATHS['ground-strap'])} className="stroke-slate-700" strokeWidth={8} strokeDasharray="2 3" />
      <path d={pathOf(CONDUCTOR_PATHS['sense-line'])} className="stroke-slate-400" strokeWidth={1.5} strokeDasharray="6 4" />
      {(Object.keys(CONDUCTOR_LABEL_AT) as Conductor[]).map((c) => {
        const l = CONDUCTOR_LABEL_AT[c];
        return (
          <text key={c} x={l.at[0]} y={l.at[1]} textAnchor={l.end ? 'end' : 'start'} className={c === 'bplus-cable' ? 'fill-stop-700 stroke-none text-[14px] font-semibold' : LABEL}>
            {l.text}
          </text>
        );
      })}
    </g>
  );
}

function Clamp({ at, towardBattery, reversed }: { at: Pt; towardBattery: Pt; reversed: boolean }) {
  const [dx, dy] = reversed ? [-towardBattery[0], -towardBattery[1]] : towardBattery;
  const [x, y] = at;
  const tip: Pt = [x + dx * 30, y + dy * 30];
  const tail: Pt = [x - dx * 12, y - dy * 12];
  const px = -dy;
  const py = dx;
  return (
    <g data-testid="clamp-jaw">
      <circle cx={x} cy={y} r={15} className="fill-live-100/70 stroke-live-600" strokeWidth={3} />
      <path d={`M ${tail[0]} ${tail[1]} L ${tip[0]} ${tip[1]}`} className="stroke-live-700" strokeWidth={3} />
      <path d={`M ${tip[0]} ${tip[1]} L ${tip[0] - dx * 9 + px * 6} ${tip[1] - dy * 9 + py * 6} L ${tip[0] - dx * 9 - px * 6} ${tip[1] - dy * 9 - py * 6} Z`} className="fill-live-700" />
    </g>
  );
}

export interface EngineBayProps extends Omit<SVGProps<SVGSVGElement>, 'ref'> {
  state: BayState;
  accessories: readonly { id: string; label: string }[];
  ref?: Ref<SVGSVGElement>;
  /** Where each lead and the clamp end when not where the state puts them (one being dragged). */
  ends?: Partial<Record<LeadTool, Pt>>;
  /** Connection points to show as drop targets, and the one under the pointer. */
  showPoints?: boolean;
  hoverPoint?: ConnectionPoint | null;
  /** Conductors to light up as places for the clamp: all of them, or the one under the pointer. */
  clampPlaces?: Conductor | 'all' | null;
  /** The live bench's handles and targets, drawn on top. */
  children?: ReactNode;
}

/** The drawing: the same on the live bench and in the replay. */
export function EngineBay({ state: s, accessories, ref, ends, showPoints = false, hoverPoint = null, clampPlaces = null, children, className = '', ...svg }: EngineBayProps) {
  const on = new Set(s.accessoriesOn ? s.accessoriesOn.split(',') : []);
  const onCount = accessories.filter((a) => on.has(a.id)).length;
  const leadEnd = (t: 'red' | 'black'): Pt => ends?.[t] ?? (s[t] ? POINT_XY[s[t]] : PARKED[t]);
  const clampSpot = ends?.clamp ? null : s.conductor ? CLAMP_SPOTS[s.conductor] : null;
  const clampEnd: Pt = ends?.clamp ?? (clampSpot ? clampSpot.at : PARKED.clamp);
  const dotStep = Math.min(12, (LOADS_BOX.w - 24) / Math.max(1, accessories.length));
  return (
    <svg ref={ref} viewBox={`0 0 ${VIEW_W} ${VIEW_H}`} role="img" aria-label={describeHookup(s)} className={`select-none ${className}`} {...svg}>
      <StaticBay />
      <Cables s={s} highlight={clampPlaces} />
      {/* Which loads are switched on */}
      <text x={LOADS_BOX.x + LOADS_BOX.w / 2} y={LOADS_BOX.y + 44} textAnchor="middle" className={LABEL}>
        {accessories.length === 0 ? 'none switchable' : `${onCount} of ${accessories.length} switched on`}
      </text>
      {accessories.map((a, i) => (
        <circle key={a.id} cx={LOADS_BOX.x + 12 + dotStep / 2 + i * dotStep} cy={LOADS_BOX.y + 70} r={Math.min(5, dotStep / 2 - 1)} className={on.has(a.id) ? 'fill-live-500' : 'fill-slate-300'}>
          <title>{`${a.label}: ${on.has(a.id) ? 'on' : 'off'}`}</title>
        </circle>
      ))}
      {/* Charge warning lamp on the dash */}
      <g>
        <rect x={440} y={140} width={150} height={32} rx={6} className="fill-white stroke-slate-300" />
        <circle cx={458} cy={156} r={7} className={s.lamp ? 'fill-warn-500' : 'fill-slate-200'} />
        <text x={472} y={161} className={LABEL}>
          charge lamp {s.lamp ? 'on' : 'off'}
        </text>
      </g>
      {/* Carbon pile across the battery posts */}
      <g>
        <rect x={344} y={352} width={150} height={86} rx={8} className={`stroke-slate-500 ${s.pileOver ? 'fill-stop-100' : s.pileHot ? 'fill-warn-100' : 'fill-white'}`} strokeWidth={1.5} />
        <path d="M 362 388 l 8 -10 l 12 20 l 12 -20 l 12 20 l 12 -20 l 12 20 l 12 -20 l 12 20 l 8 -10" fill="none" className={s.pileOver ? 'stroke-stop-600' : s.pileHot ? 'stroke-warn-500' : 'stroke-slate-600'} strokeWidth={2} />
        <text x={419} y={426} textAnchor="middle" className={LABEL}>
          carbon pile
        </text>
        <path d="M 362 352 C 362 286, 140 286, 124 322" fill="none" className="stroke-stop-600" strokeWidth={2} />
        <path d="M 476 352 C 476 296, 240 292, 224 322" fill="none" className="stroke-slate-900" strokeWidth={2} />
      </g>
      {/* Connection points */}
      {(Object.keys(POINT_XY) as ConnectionPoint[]).map((p) => {
        const [x, y] = POINT_XY[p];
        const active = hoverPoint === p;
        return <circle key={p} data-point={p} cx={x} cy={y} r={showPoints ? 13 : 7} className={`${active ? 'fill-live-300' : showPoints ? 'fill-live-100' : 'fill-white'} stroke-slate-700`} strokeWidth={2} />;
      })}
      {/* Tester leads and clamp */}
      <g fill="none" strokeLinecap="round">
        <path d={leadPath(JACKS.clamp, clampEnd)} className="stroke-slate-500" strokeWidth={2.5} />
        <path d={leadPath(JACKS.black, leadEnd('black'))} className="stroke-slate-950" strokeWidth={3} />
        <path d={leadPath(JACKS.red, leadEnd('red'))} className="stroke-stop-600" strokeWidth={3} />
      </g>
      {clampSpot ? (
        <Clamp at={clampSpot.at} towardBattery={clampSpot.towardBattery} reversed={s.arrow !== 'toward-battery'} />
      ) : (
        <circle cx={clampEnd[0]} cy={clampEnd[1]} r={13} className="fill-live-100 stroke-live-600" strokeWidth={3} />
      )}
      {(['black', 'red'] as const).map((t) => {
        const [x, y] = leadEnd(t);
        return <rect key={t} x={x - 5} y={y - 18} width={10} height={16} rx={3} className={t === 'red' ? 'fill-stop-600' : 'fill-slate-950'} />;
      })}
      {children}
    </svg>
  );
}
