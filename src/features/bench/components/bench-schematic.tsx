/**
 * The engine bay as a schematic: battery, remote jump posts, alternator with
 * its B+ stud and case, the B+ cable with its fusible link, the ground strap,
 * the engine block, the body, the vehicle loads, the carbon pile and the
 * tester's leads. Leads and the clamp go on by drag, or by click (pick one
 * up, then click where it goes); the hook-up panel beside it does the same
 * from the keyboard. Everything drawn is read from the snapshot.
 */
import { memo, useRef, useState, type PointerEvent } from 'react';
import { curveBasis, line } from 'd3-shape';
import type { ConnectionPoint, Conductor, Controls, LeadColour } from '../../../../sim/inputs.ts';
import { CONDUCTORS, CONNECTION_POINTS } from '../../../../sim/inputs.ts';
import type { AccessoryParams } from '../../../../sim/params.ts';
import { benchActions } from '../stores/bench-actions.ts';
import type { BenchTool } from '../stores/bench-ui-store.ts';
import { useBenchUi } from '../stores/bench-ui-store.ts';
import { shallowEqual, useBench, useBenchDispatch } from '../hooks/use-bench.ts';
import {
  CLAMP_SPOTS,
  CONDUCTOR_LABELS,
  CONDUCTOR_PATHS,
  FUSIBLE_LINK,
  JACKS,
  METER,
  PARKED,
  POINT_LABELS,
  POINT_XY,
  VIEW_H,
  VIEW_W,
  nearestConductor,
  nearestPoint,
  type Pt,
} from './schematic-layout.ts';

const polyline = line<Pt>()
  .x((p) => p[0])
  .y((p) => p[1]);
const sagging = line<Pt>()
  .x((p) => p[0])
  .y((p) => p[1])
  .curve(curveBasis);

/** A tester lead from its jack to where it ends, sagging under its own weight. */
function leadPath(from: Pt, to: Pt): string {
  const mid: Pt = [(from[0] + to[0]) / 2, Math.max(from[1], to[1]) + 40 + Math.abs(from[0] - to[0]) * 0.08];
  return sagging([from, [from[0], from[1] + 24], mid, to]) ?? '';
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

const ALT_PULLEY: Pt = [720, 200];
const ALT_PULLEY_R = 22;
const CRANK: Pt = [866, 360];
const CRANK_R = 28;

/** The belt's two straight runs, tangent to both pulleys (outer tangents). */
function beltPath(): string {
  const [ax, ay] = ALT_PULLEY;
  const [cx, cy] = CRANK;
  const d = Math.hypot(cx - ax, cy - ay);
  const ux = (cx - ax) / d;
  const uy = (cy - ay) / d;
  const k = (CRANK_R - ALT_PULLEY_R) / d;
  const runs = [1, -1].map((side) => {
    // Normal of an outer tangent: rotate the centre line by the angle whose cosine is -k.
    const c = -k;
    const sn = side * Math.sqrt(1 - k * k);
    const nx = ux * c - uy * sn;
    const ny = ux * sn + uy * c;
    return `M ${ax + nx * ALT_PULLEY_R} ${ay + ny * ALT_PULLEY_R} L ${cx + nx * CRANK_R} ${cy + ny * CRANK_R}`;
  });
  return runs.join(' ');
}
const BELT_PATH = beltPath();

/** Everything that never changes during an attempt. */
const StaticBay = memo(function StaticBay({ accessories }: { accessories: AccessoryParams[] }) {
  return (
    <g>
      {/* Body (chassis) */}
      <line x1={40} y1={505} x2={960} y2={505} className="stroke-slate-500" strokeWidth={6} strokeLinecap="round" />
      <text x={44} y={528} className="fill-slate-500 text-[13px]">
        Body (chassis) ground
      </text>
      {/* Battery */}
      <rect x={86} y={336} width={190} height={110} rx={8} className="fill-slate-100 stroke-slate-600" strokeWidth={2} />
      <rect x={118} y={324} width={24} height={12} rx={2} className="fill-slate-500" />
      <rect x={218} y={324} width={24} height={12} rx={2} className="fill-slate-500" />
      <text x={130} y={364} textAnchor="middle" className="fill-slate-700 text-[22px] font-semibold">
        +
      </text>
      <text x={230} y={364} textAnchor="middle" className="fill-slate-700 text-[22px] font-semibold">
        −
      </text>
      <text x={181} y={412} textAnchor="middle" className="fill-slate-600 text-[14px]">
        Battery 12 V
      </text>
      {/* Remote jump posts */}
      <rect x={86} y={52} width={164} height={58} rx={6} className="fill-white stroke-slate-400" strokeWidth={1.5} strokeDasharray="5 3" />
      <text x={94} y={132} className="fill-slate-500 text-[11px]">
        remote jump posts
      </text>
      <text x={120} y={64} textAnchor="middle" className="fill-slate-700 text-[13px] font-semibold">
        +
      </text>
      <Ground x={210} y={118} />
      <line x1={210} y1={84} x2={210} y2={118} className="stroke-slate-500" strokeWidth={2} />
      {/* Vehicle loads */}
      <line x1={430} y1={78} x2={430} y2={132} className="stroke-slate-500" strokeWidth={3} />
      <rect x={380} y={132} width={150} height={22 + accessories.length * 15} rx={6} className="fill-white stroke-slate-400" strokeWidth={1.5} />
      <text x={455} y={148} textAnchor="middle" className="fill-slate-600 text-[12px] font-medium">
        Vehicle loads
      </text>
      <line x1={505} y1={154 + accessories.length * 15} x2={505} y2={505} className="stroke-slate-400" strokeWidth={2.5} />
      {/* Engine block, starter */}
      <rect x={520} y={300} width={390} height={150} rx={12} className="fill-stone-200 stroke-slate-500" strokeWidth={2} />
      <text x={890} y={438} textAnchor="end" className="fill-slate-600 text-[14px]">
        Engine block
      </text>
      <text x={576} y={432} className="fill-slate-500 text-[11px]">
        block ground
      </text>
      <text x={396} y={498} className="fill-slate-500 text-[11px]">
        body ground
      </text>
      <rect x={600} y={330} width={80} height={40} rx={5} className="fill-white stroke-slate-400" strokeWidth={1.5} />
      <text x={640} y={355} textAnchor="middle" className="fill-slate-500 text-[11px]">
        starter
      </text>
      {/* Alternator and its mounting */}
      <line x1={720} y1={264} x2={720} y2={300} className="stroke-slate-500" strokeWidth={8} />
      <line x1={790} y1={256} x2={810} y2={300} className="stroke-slate-500" strokeWidth={5} />
      <circle cx={720} cy={200} r={64} className="fill-white stroke-slate-600" strokeWidth={2.5} />
      <circle cx={720} cy={200} r={22} className="fill-stone-100 stroke-slate-400" strokeWidth={1.5} />
      <text x={720} y={205} textAnchor="middle" className="fill-slate-500 text-[11px]">
        pulley
      </text>
      <text x={720} y={290} textAnchor="middle" className="fill-slate-600 text-[13px]">
        Alternator
      </text>
      <text x={660} y={182} textAnchor="middle" className="fill-slate-700 text-[12px] font-semibold">
        B+
      </text>
      <text x={806} y={246} className="fill-slate-500 text-[11px]">
        case
      </text>
      {/* Belt from the crank pulley to the alternator pulley */}
      <path d={BELT_PATH} className="stroke-slate-400" strokeWidth={3} fill="none" />
      <circle cx={CRANK[0]} cy={CRANK[1]} r={CRANK_R} className="fill-stone-100 stroke-slate-500" strokeWidth={2} />
      <text x={CRANK[0]} y={CRANK[1] + 44} textAnchor="middle" className="fill-slate-500 text-[11px]">
        crank pulley
      </text>
      {/* Tester meter body */}
      <rect x={METER.x} y={METER.y} width={METER.w} height={METER.h} rx={10} className="fill-slate-800" />
      <text x={METER.x + METER.w / 2} y={METER.y + 20} textAnchor="middle" className="fill-slate-300 text-[11px] tracking-wide">
        BENCH METER
      </text>
      <circle cx={JACKS.red[0]} cy={JACKS.red[1] - 8} r={6} className="fill-stop-600" />
      <circle cx={JACKS.clamp[0]} cy={JACKS.clamp[1] - 8} r={6} className="fill-slate-400" />
      <circle cx={JACKS.black[0]} cy={JACKS.black[1] - 8} r={6} className="fill-slate-950 stroke-slate-400" />
    </g>
  );
});

function Cables({ linkOpen, bplusConnected, ammeterInSeries, hoverConductor }: { linkOpen: boolean; bplusConnected: boolean; ammeterInSeries: boolean; hoverConductor: Conductor | null }) {
  const cls = (c: Conductor, base: string) => `${base} ${hoverConductor === c ? 'stroke-live-500' : ''}`;
  const bplus = CONDUCTOR_PATHS['bplus-cable'];
  const end = bplus[bplus.length - 1]!;
  const lifted: Pt = [end[0] - 22, end[1] - 26];
  const bplusRoute: Pt[] = bplusConnected ? [...bplus] : [...bplus.slice(0, -1), lifted];
  return (
    <g fill="none" strokeLinejoin="round" strokeLinecap="round">
      <path d={polyline([...CONDUCTOR_PATHS['battery-pos-cable']]) ?? ''} className={cls('battery-pos-cable', 'stroke-stop-700')} strokeWidth={6} />
      {/* B+ cable with the fusible link cut out of it */}
      <path d={polyline([bplusRoute[0]!, [FUSIBLE_LINK.x1, FUSIBLE_LINK.y]]) ?? ''} className={cls('bplus-cable', 'stroke-stop-700')} strokeWidth={5} />
      <path d={polyline([[FUSIBLE_LINK.x2, FUSIBLE_LINK.y], ...bplusRoute.slice(1)]) ?? ''} className={cls('bplus-cable', 'stroke-stop-700')} strokeWidth={5} />
      {linkOpen ? (
        <g data-testid="fusible-link-open">
          <path d={`M ${FUSIBLE_LINK.x1} ${FUSIBLE_LINK.y} l 20 -3 l 6 -8`} className="stroke-stop-600" strokeWidth={3} />
          <path d={`M ${FUSIBLE_LINK.x2} ${FUSIBLE_LINK.y} l -20 3 l -6 8`} className="stroke-stop-600" strokeWidth={3} />
          <text x={(FUSIBLE_LINK.x1 + FUSIBLE_LINK.x2) / 2} y={FUSIBLE_LINK.y - 14} textAnchor="middle" className="fill-stop-700 stroke-none text-[11px] font-semibold">
            link open
          </text>
        </g>
      ) : (
        <g>
          <path d={`M ${FUSIBLE_LINK.x1} ${FUSIBLE_LINK.y} h ${FUSIBLE_LINK.x2 - FUSIBLE_LINK.x1}`} className="stroke-warn-500" strokeWidth={3} strokeDasharray="3 2" />
          <text x={(FUSIBLE_LINK.x1 + FUSIBLE_LINK.x2) / 2} y={FUSIBLE_LINK.y - 10} textAnchor="middle" className="fill-slate-500 stroke-none text-[11px]">
            fusible link
          </text>
        </g>
      )}
      {!bplusConnected && (
        <text x={lifted[0] - 6} y={lifted[1] - 8} textAnchor="end" className="fill-warn-700 stroke-none text-[11px] font-medium">
          B+ lead off
        </text>
      )}
      <path d={polyline([...CONDUCTOR_PATHS['battery-neg-cable']]) ?? ''} className={cls('battery-neg-cable', 'stroke-slate-900')} strokeWidth={6} />
      {ammeterInSeries && (
        <g>
          <circle cx={260} cy={300} r={15} className="fill-white stroke-slate-800" strokeWidth={2} />
          <text x={260} y={305} textAnchor="middle" className="fill-slate-800 stroke-none text-[13px] font-semibold">
            mA
          </text>
        </g>
      )}
      <path d={polyline([...CONDUCTOR_PATHS['ground-strap']]) ?? ''} className={cls('ground-strap', 'stroke-slate-700')} strokeWidth={8} strokeDasharray="2 3" />
      <path d={polyline([...CONDUCTOR_PATHS['sense-line']]) ?? ''} className={cls('sense-line', 'stroke-slate-400')} strokeWidth={1.5} strokeDasharray="6 4" />
      <text x={200} y={20} className="fill-slate-400 stroke-none text-[11px]">
        regulator sense line
      </text>
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

interface Drag {
  tool: BenchTool;
  start: Pt;
  at: Pt;
  moved: boolean;
}

const selectHookup = (s: { controls: Controls; linkBlownHere: boolean; readings: { chargeWarning: boolean; pileHot: boolean; pileOverheated: boolean } }) => ({
  red: s.controls.leads.red,
  black: s.controls.leads.black,
  conductor: s.controls.clamp.conductor,
  arrow: s.controls.clamp.arrow,
  ammeter: s.controls.ammeterInSeries,
  bplus: s.controls.bplusConnected,
  accessoriesOn: s.controls.accessoriesOn.join(','),
  linkOpen: s.linkBlownHere,
  lamp: s.readings.chargeWarning,
  pileHot: s.readings.pileHot,
  pileOver: s.readings.pileOverheated,
});

export function describeHookup(h: ReturnType<typeof selectHookup>): string {
  const lead = (c: string, p: ConnectionPoint | null) => `${c} lead ${p ? `on the ${POINT_LABELS[p].toLowerCase()}` : 'not connected'}`;
  const clamp = h.conductor ? `clamp on the ${CONDUCTOR_LABELS[h.conductor].toLowerCase()}, arrow ${h.arrow === 'toward-battery' ? 'toward the battery' : 'toward the alternator'}` : 'clamp not on a cable';
  const extras = [h.ammeter ? 'series ammeter fitted at the battery negative' : '', h.bplus ? '' : 'B+ lead removed from the alternator', h.linkOpen ? 'the fusible link is open' : '']
    .filter(Boolean)
    .join('; ');
  return `Engine bay schematic: ${lead('red', h.red)}; ${lead('black', h.black)}; ${clamp}${extras ? `; ${extras}` : ''}.`;
}

export function BenchSchematic({ accessories }: { accessories: AccessoryParams[] }) {
  const h = useBench(selectHookup, shallowEqual);
  const dispatch = useBenchDispatch();
  const tool = useBenchUi((s) => s.tool);
  const pickTool = useBenchUi((s) => s.pickTool);
  const svgRef = useRef<SVGSVGElement>(null);
  const [drag, setDrag] = useState<Drag | null>(null);

  const toSvg = (e: PointerEvent): Pt => {
    const svg = svgRef.current;
    const m = svg?.getScreenCTM();
    if (!svg || !m) return [0, 0];
    const p = new DOMPoint(e.clientX, e.clientY).matrixTransform(m.inverse());
    return [p.x, p.y];
  };

  const place = (t: BenchTool, x: number, y: number, dropAnywhere: boolean) => {
    if (t === 'clamp') {
      const c = nearestConductor(x, y);
      if (c || dropAnywhere) dispatch(benchActions.placeClamp(c, h.arrow));
      return c !== null;
    }
    const p = nearestPoint(x, y);
    if (p || dropAnywhere) dispatch(benchActions.clipLead(t, p));
    return p !== null;
  };

  const onHandleDown = (t: BenchTool) => (e: PointerEvent<SVGGElement>) => {
    e.stopPropagation();
    svgRef.current?.setPointerCapture(e.pointerId);
    const at = toSvg(e);
    setDrag({ tool: t, start: at, at, moved: false });
  };

  const onMove = (e: PointerEvent<SVGSVGElement>) => {
    if (!drag) return;
    const at = toSvg(e);
    const moved = drag.moved || Math.hypot(at[0] - drag.start[0], at[1] - drag.start[1]) > 6;
    setDrag({ ...drag, at, moved });
  };

  const onUp = (e: PointerEvent<SVGSVGElement>) => {
    if (drag) {
      if (drag.moved) {
        place(drag.tool, drag.at[0], drag.at[1], true);
        pickTool(null);
      } else {
        pickTool(tool === drag.tool ? null : drag.tool);
      }
      setDrag(null);
      return;
    }
    if (tool) {
      const [x, y] = toSvg(e);
      if (place(tool, x, y, false)) pickTool(null);
    }
  };

  const endOf = (t: LeadColour): Pt => {
    if (drag?.tool === t && drag.moved) return drag.at;
    const p = h[t];
    return p ? POINT_XY[p] : PARKED[t];
  };
  const clampSpot = drag?.tool === 'clamp' && drag.moved ? null : h.conductor ? CLAMP_SPOTS[h.conductor] : null;
  const clampEnd: Pt = drag?.tool === 'clamp' && drag.moved ? drag.at : clampSpot ? clampSpot.at : PARKED.clamp;
  const hoverConductor = drag?.tool === 'clamp' && drag.moved ? nearestConductor(drag.at[0], drag.at[1]) : null;
  const hoverPoint = drag && drag.tool !== 'clamp' && drag.moved ? nearestPoint(drag.at[0], drag.at[1]) : null;
  const on = new Set(h.accessoriesOn ? h.accessoriesOn.split(',') : []);
  const showPoints = tool === 'red' || tool === 'black' || (drag !== null && drag.tool !== 'clamp');
  const showConductors = tool === 'clamp' || drag?.tool === 'clamp';

  return (
    <svg
      ref={svgRef}
      viewBox={`0 0 ${VIEW_W} ${VIEW_H}`}
      role="img"
      aria-label={describeHookup(h)}
      className={`h-auto w-full touch-none select-none rounded-xl bg-stone-50 ring-1 ring-slate-200 ${tool ? 'cursor-crosshair' : ''}`}
      onPointerMove={onMove}
      onPointerUp={onUp}
      onPointerCancel={() => setDrag(null)}
    >
      <StaticBay accessories={accessories} />
      <Cables linkOpen={h.linkOpen} bplusConnected={h.bplus} ammeterInSeries={h.ammeter} hoverConductor={hoverConductor} />
      {/* Accessory list with their state */}
      {accessories.map((a, i) => (
        <g key={a.id}>
          <circle cx={392} cy={163 + i * 15} r={4} className={on.has(a.id) ? 'fill-live-500' : 'fill-slate-300'} />
          <text x={402} y={167 + i * 15} className={`text-[11px] ${on.has(a.id) ? 'fill-slate-800' : 'fill-slate-400'}`}>
            {a.label.length > 18 ? `${a.label.slice(0, 17)}…` : a.label}
          </text>
        </g>
      ))}
      {/* Charge warning lamp */}
      <g>
        <rect x={560} y={16} width={128} height={30} rx={6} className="fill-white stroke-slate-300" />
        <circle cx={578} cy={31} r={7} className={h.lamp ? 'fill-stop-600' : 'fill-slate-200'} />
        <text x={592} y={35} className="fill-slate-600 text-[11px]">
          charge lamp {h.lamp ? 'on' : 'off'}
        </text>
      </g>
      {/* Carbon pile across the battery posts */}
      <g>
        <rect x={300} y={360} width={150} height={82} rx={8} className={`stroke-slate-500 ${h.pileOver ? 'fill-stop-100' : h.pileHot ? 'fill-warn-100' : 'fill-white'}`} strokeWidth={1.5} />
        <path d="M 318 396 l 8 -10 l 12 20 l 12 -20 l 12 20 l 12 -20 l 12 20 l 12 -20 l 12 20 l 8 -10" fill="none" className={h.pileOver ? 'stroke-stop-600' : h.pileHot ? 'stroke-warn-500' : 'stroke-slate-600'} strokeWidth={2} />
        <text x={375} y={432} textAnchor="middle" className="fill-slate-600 text-[12px]">
          carbon pile
        </text>
        <path d="M 322 360 C 322 280, 150 280, 138 324" fill="none" className="stroke-stop-600" strokeWidth={2} />
        <path d="M 428 360 C 428 300, 250 296, 238 324" fill="none" className="stroke-slate-900" strokeWidth={2} />
      </g>
      {/* Targets */}
      {CONNECTION_POINTS.map((p) => {
        const [x, y] = POINT_XY[p];
        const active = hoverPoint === p;
        return (
          <g key={p} data-point={p} onPointerUp={() => undefined}>
            <circle cx={x} cy={y} r={showPoints ? 13 : 7} className={`${active ? 'fill-live-300' : showPoints ? 'fill-live-100' : 'fill-white'} stroke-slate-700`} strokeWidth={2} />
            {showPoints && <title>{POINT_LABELS[p]}</title>}
          </g>
        );
      })}
      {showConductors &&
        CONDUCTORS.map((c) => {
          const [x, y] = CLAMP_SPOTS[c].at;
          return <circle key={c} cx={x} cy={y} r={10} className="fill-none stroke-live-500" strokeWidth={2} strokeDasharray="3 3" data-conductor={c} />;
        })}
      {/* Tester leads and clamp */}
      <g fill="none" strokeLinecap="round">
        <path d={leadPath(JACKS.clamp, clampEnd)} className="stroke-slate-500" strokeWidth={2.5} />
        <path d={leadPath(JACKS.black, endOf('black'))} className="stroke-slate-950" strokeWidth={3} />
        <path d={leadPath(JACKS.red, endOf('red'))} className="stroke-stop-600" strokeWidth={3} />
      </g>
      {clampSpot ? (
        <Clamp at={clampSpot.at} towardBattery={clampSpot.towardBattery} reversed={h.arrow !== 'toward-battery'} />
      ) : (
        <circle cx={clampEnd[0]} cy={clampEnd[1]} r={13} className="fill-live-100 stroke-live-600" strokeWidth={3} />
      )}
      <g className="cursor-grab" onPointerDown={onHandleDown('clamp')} data-handle="clamp">
        <circle cx={clampEnd[0]} cy={clampEnd[1]} r={18} fill="transparent" className={tool === 'clamp' ? 'stroke-live-500' : 'stroke-transparent'} strokeWidth={3} />
      </g>
      {(['black', 'red'] as const).map((t) => {
        const [x, y] = endOf(t);
        return (
          <g key={t} className="cursor-grab" onPointerDown={onHandleDown(t)} data-handle={t}>
            <circle cx={x} cy={y} r={16} fill="transparent" className={tool === t ? 'stroke-live-500' : 'stroke-transparent'} strokeWidth={3} />
            <rect x={x - 5} y={y - 18} width={10} height={16} rx={3} className={t === 'red' ? 'fill-stop-600' : 'fill-slate-950'} />
          </g>
        );
      })}
    </svg>
  );
}
