/**
 * The carbon-pile load dial: a large rotary control over 270°. Drag it, turn
 * the wheel over it, or use the keys (arrows 1 %, Page Up/Down 10 %, Home
 * off, End full). Around it a heat band, labelled as such so it does not read
 * as the load scale, shows the pile's temperature: amber from its warning
 * temperature, red when it has cut out.
 */
import { useCallback, useEffect, useId, useRef, type KeyboardEvent, type PointerEvent } from 'react';
import { arc } from 'd3-shape';
import { scaleLinear } from 'd3-scale';
import { clampDial, dialPercent } from '../../../../shared/dial.ts';

export interface LoadDialProps {
  value01: number;
  onChange: (value01: number) => void;
  pileA: number;
  pileTempC: number;
  warnC: number;
  tripC: number;
  hot: boolean;
  tripped: boolean;
  size?: number;
}

const SWEEP = (3 * Math.PI) / 2;
const START = -SWEEP / 2;
const KEY_STEP = 0.01;
const PAGE_STEP = 0.1;

/** The value a key press leads to, or null for keys the dial does not use. */
export function dialKeyValue(key: string, value01: number): number | null {
  switch (key) {
    case 'ArrowUp':
    case 'ArrowRight':
      return clampDial(value01 + KEY_STEP);
    case 'ArrowDown':
    case 'ArrowLeft':
      return clampDial(value01 - KEY_STEP);
    case 'PageUp':
      return clampDial(value01 + PAGE_STEP);
    case 'PageDown':
      return clampDial(value01 - PAGE_STEP);
    case 'Home':
      return 0;
    case 'End':
      return 1;
    default:
      return null;
  }
}

/** Dial value from a pointer position relative to the dial's centre (0 at 12 o'clock, clockwise). */
export function dialValueAt(dx: number, dy: number): number {
  const angle = Math.atan2(dx, -dy);
  return clampDial((angle - START) / SWEEP);
}

export function dialValueText(value01: number, pileA: number, hot: boolean, tripped: boolean): string {
  const pct = dialPercent(value01);
  const state = tripped ? ', pile cut out: overheated' : hot ? ', pile hot' : '';
  return `${pct} percent, pile drawing ${Math.round(pileA)} amps${state}`;
}

const heatArc = arc<{ start: number; end: number }>()
  .innerRadius(0.9)
  .outerRadius(1)
  .startAngle((d) => d.start)
  .endAngle((d) => d.end)
  .cornerRadius(0.02);

/** The heat label's path: an arc just outside the band, over its first part. */
const LABEL_R = 1.1;
const labelArc = (from: number, to: number) =>
  `M ${LABEL_R * Math.sin(from)} ${-LABEL_R * Math.cos(from)} A ${LABEL_R} ${LABEL_R} 0 0 1 ${LABEL_R * Math.sin(to)} ${-LABEL_R * Math.cos(to)}`;

export function LoadDial({ value01, onChange, pileA, pileTempC, warnC, tripC, hot, tripped, size = 220 }: LoadDialProps) {
  const ref = useRef<SVGSVGElement>(null);
  const heatLabelId = `dial-heat-${useId().replace(/:/g, '')}`;
  const dragging = useRef(false);
  /** The dial's centre on screen, measured once per drag (no layout work per pointer move). */
  const centre = useRef<{ x: number; y: number }>({ x: 0, y: 0 });
  // The value last sent, until the bench shows a new one: the keys and the wheel step from it, so presses that
  // come faster than the display's frames (a held key, a slow laptop) all count.
  const shownRef = useRef(value01);
  const latestRef = useRef(value01);
  if (shownRef.current !== value01) {
    shownRef.current = value01;
    latestRef.current = value01;
  }
  const onChangeRef = useRef(onChange);
  onChangeRef.current = onChange;
  // Reads only refs, so the wheel listener registered once can call it too.
  const send = useCallback((v: number) => {
    latestRef.current = v;
    onChangeRef.current(v);
  }, []);

  // React's wheel listener is passive; the dial must stop the page scrolling.
  useEffect(() => {
    const el = ref.current;
    if (!el) return;
    const onWheel = (e: WheelEvent) => {
      e.preventDefault();
      const step = e.shiftKey ? PAGE_STEP : KEY_STEP;
      send(clampDial(latestRef.current + (e.deltaY < 0 ? step : -step)));
    };
    el.addEventListener('wheel', onWheel, { passive: false });
    return () => el.removeEventListener('wheel', onWheel);
  }, [send]);

  const fromPointer = (e: PointerEvent<SVGSVGElement>) => {
    send(dialValueAt(e.clientX - centre.current.x, e.clientY - centre.current.y));
  };

  const onKeyDown = (e: KeyboardEvent<SVGSVGElement>) => {
    const next = dialKeyValue(e.key, latestRef.current);
    if (next === null) return;
    e.preventDefault();
    send(next);
  };

  const temp = scaleLinear().domain([0, tripC]).range([START, START + SWEEP]).clamp(true);
  const warnAngle = temp(warnC);
  const tempAngle = temp(Math.max(0, pileTempC));
  const pointer = START + SWEEP * value01;
  const ticks = Array.from({ length: 11 }, (_, i) => START + (SWEEP * i) / 10);
  const bandColour = tripped ? 'fill-stop-600' : hot ? 'fill-warn-500' : 'fill-live-500';

  return (
    <svg
      ref={ref}
      role="slider"
      tabIndex={0}
      aria-label="Carbon pile load"
      aria-valuemin={0}
      aria-valuemax={100}
      aria-valuenow={dialPercent(value01)}
      aria-valuetext={dialValueText(value01, pileA, hot, tripped)}
      aria-orientation="vertical"
      viewBox="-1.28 -1.28 2.56 2.56"
      width={size}
      height={size}
      className="cursor-grab touch-none select-none rounded-full active:cursor-grabbing"
      onKeyDown={onKeyDown}
      onPointerDown={(e) => {
        dragging.current = true;
        const box = e.currentTarget.getBoundingClientRect();
        centre.current = { x: box.left + box.width / 2, y: box.top + box.height / 2 };
        e.currentTarget.setPointerCapture(e.pointerId);
        e.currentTarget.focus();
        fromPointer(e);
      }}
      onPointerMove={(e) => {
        if (dragging.current) fromPointer(e);
      }}
      onPointerUp={(e) => {
        dragging.current = false;
        e.currentTarget.releasePointerCapture(e.pointerId);
      }}
      onPointerCancel={() => {
        dragging.current = false;
      }}
    >
      {/* Heat band: the track, the warning zone, and the pile's temperature now. */}
      <path d={heatArc({ start: START, end: START + SWEEP }) ?? ''} className="fill-stone-200" />
      <path d={heatArc({ start: warnAngle, end: START + SWEEP }) ?? ''} className="fill-warn-100" />
      <path d={heatArc({ start: START, end: Math.max(START + 0.001, tempAngle) }) ?? ''} className={bandColour} />
      <defs>
        <path id={heatLabelId} d={labelArc(START, START + SWEEP * 0.55)} />
      </defs>
      <text className="fill-slate-600 font-sans font-semibold" fontSize={0.15} letterSpacing={0.02}>
        <textPath href={`#${heatLabelId}`}>PILE HEAT</textPath>
      </text>
      {ticks.map((a, i) => (
        <line
          key={i}
          x1={0.74 * Math.sin(a)}
          y1={-0.74 * Math.cos(a)}
          x2={0.82 * Math.sin(a)}
          y2={-0.82 * Math.cos(a)}
          className="stroke-slate-400"
          strokeWidth={i % 5 === 0 ? 0.03 : 0.015}
        />
      ))}
      <circle r={0.66} className="fill-slate-800" />
      <circle r={0.58} className="fill-slate-700" />
      <line x1={0} y1={0} x2={0.5 * Math.sin(pointer)} y2={-0.5 * Math.cos(pointer)} className="stroke-live-300" strokeWidth={0.07} strokeLinecap="round" />
      <text y={-0.22} textAnchor="middle" className="fill-slate-300 font-sans" fontSize={0.14}>
        load
      </text>
      <text y={0.34} textAnchor="middle" className="fill-slate-100 font-mono" fontSize={0.22}>
        {dialPercent(value01)}%
      </text>
      <text y={1.04} textAnchor="middle" className={`font-sans font-semibold ${tripped ? 'fill-stop-700' : hot ? 'fill-warn-700' : 'fill-slate-600'}`} fontSize={0.16}>
        {Math.round(pileTempC)} °C
      </text>
    </svg>
  );
}
