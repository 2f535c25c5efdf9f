/**
 * The live engine bay: the shared drawing with the tester's handles on it.
 * Leads and the clamp go on by drag, or by click (pick one up, then click
 * where it goes); the hook-up panel does the same from the keyboard. While a
 * lead is in hand the connection points show as targets, and while the clamp
 * is in hand every cable it can close on lights up. Every target is at least
 * 24 × 24 CSS px however small the drawing is shown (WCAG 2.2, 2.5.8).
 */
import { useEffect, useRef, useState, type PointerEvent } from 'react';
import type { Controls } from '../../../../sim/inputs.ts';
import { CONDUCTORS, CONNECTION_POINTS } from '../../../../sim/inputs.ts';
import type { AccessoryParams } from '../../../../sim/params.ts';
import { EngineBay, bayStateOf, type BayReadings, type BayState } from '../../../components/schematic/engine-bay.tsx';
import { CLAMP_SPOTS, CONDUCTOR_LABELS, CONDUCTOR_PATHS, PARKED, POINT_LABELS, POINT_XY, VIEW_H, VIEW_W, nearestConductor, nearestPoint, targetRadius, type Pt } from '../../../components/schematic/layout.ts';
import { benchActions } from '../stores/bench-actions.ts';
import type { BenchTool } from '../stores/bench-ui-store.ts';
import { useBenchUi } from '../stores/bench-ui-store.ts';
import { shallowEqual, useBench, useBenchDispatch } from '../hooks/use-bench.ts';

interface Drag {
  tool: BenchTool;
  start: Pt;
  at: Pt;
  moved: boolean;
}

export const selectBay = (s: { controls: Controls; linkBlownHere: boolean; readings: BayReadings }): BayState => bayStateOf(s.controls, s.linkBlownHere, s.readings);

/**
 * The drawing's box in CSS pixels (the size of the box it fills), and the
 * pixels per drawing unit of an SVG shown with the default "xMidYMid meet".
 * The drawing gets its size in pixels rather than as a percentage, so the
 * browser does not lay out its hundreds of shapes and labels again whenever
 * a readout elsewhere on the bench changes.
 */
function useDrawingBox(ref: React.RefObject<SVGSVGElement | null>): { width: number; height: number; scale: number } | null {
  const [box, setBox] = useState<{ width: number; height: number; scale: number } | null>(null);
  useEffect(() => {
    const el = ref.current?.parentElement;
    if (!el || typeof ResizeObserver === 'undefined') return;
    const measure = () => {
      const width = el.clientWidth;
      const height = el.clientHeight;
      if (width > 0 && height > 0) setBox((b) => (b && b.width === width && b.height === height ? b : { width, height, scale: Math.min(width / VIEW_W, height / VIEW_H) }));
    };
    measure();
    const ro = new ResizeObserver(measure);
    ro.observe(el);
    return () => ro.disconnect();
  }, [ref]);
  return box;
}

export function BenchSchematic({ accessories, className = '' }: { accessories: AccessoryParams[]; className?: string }) {
  const h = useBench(selectBay, shallowEqual);
  const dispatch = useBenchDispatch();
  const tool = useBenchUi((s) => s.tool);
  const pickTool = useBenchUi((s) => s.pickTool);
  const svgRef = useRef<SVGSVGElement>(null);
  const [drag, setDrag] = useState<Drag | null>(null);
  const box = useDrawingBox(svgRef);
  const targetR = targetRadius(box?.scale ?? 0.5);

  const toSvg = (e: PointerEvent): Pt => {
    const svg = svgRef.current;
    const m = svg?.getScreenCTM();
    if (!svg || !m) return [0, 0];
    const p = new DOMPoint(e.clientX, e.clientY).matrixTransform(m.inverse());
    return [p.x, p.y];
  };

  const place = (t: BenchTool, x: number, y: number, dropAnywhere: boolean) => {
    if (t === 'clamp') {
      const c = nearestConductor(x, y, targetR);
      if (c || dropAnywhere) dispatch(benchActions.placeClamp(c, h.arrow));
      return c !== null;
    }
    const p = nearestPoint(x, y, Math.max(30, targetR));
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

  const dragging = drag?.moved ? drag : null;
  const ends = dragging ? { [dragging.tool]: dragging.at } : undefined;
  const endOf = (t: BenchTool): Pt => {
    if (dragging?.tool === t) return dragging.at;
    if (t === 'clamp') return h.conductor ? CLAMP_SPOTS[h.conductor].at : PARKED.clamp;
    const p = h[t];
    return p ? POINT_XY[p] : PARKED[t];
  };
  const clampInHand = tool === 'clamp' || drag?.tool === 'clamp';
  const leadInHand = tool === 'red' || tool === 'black' || (drag !== null && drag.tool !== 'clamp');
  const hoverConductor = dragging?.tool === 'clamp' ? nearestConductor(dragging.at[0], dragging.at[1], targetR) : null;
  const hoverPoint = dragging && dragging.tool !== 'clamp' ? nearestPoint(dragging.at[0], dragging.at[1], Math.max(30, targetR)) : null;

  return (
    <EngineBay
      ref={svgRef}
      state={h}
      accessories={accessories}
      ends={ends}
      showPoints={leadInHand}
      hoverPoint={hoverPoint}
      clampPlaces={clampInHand ? (hoverConductor ?? 'all') : null}
      style={box ? { width: box.width, height: box.height } : { width: '100%', height: '100%' }}
      className={`touch-none rounded-xl bg-stone-50 ring-1 ring-slate-200 ${tool ? 'cursor-crosshair' : ''} ${className}`}
      onPointerMove={onMove}
      onPointerUp={onUp}
      onPointerCancel={() => setDrag(null)}
    >
      {/* Drop targets: clicked while a lead or the clamp is in hand. */}
      {leadInHand &&
        CONNECTION_POINTS.map((p) => (
          <circle key={p} cx={POINT_XY[p][0]} cy={POINT_XY[p][1]} r={targetR} fill="transparent" data-target={p}>
            <title>{POINT_LABELS[p]}</title>
          </circle>
        ))}
      {clampInHand &&
        CONDUCTORS.map((c) => (
          <path key={c} d={`M ${CONDUCTOR_PATHS[c].map((q) => q.join(' ')).join(' L ')}`} fill="none" stroke="transparent" strokeWidth={targetR * 2} data-conductor={c}>
            <title>{CONDUCTOR_LABELS[c]}</title>
          </path>
        ))}
      {/* The handles: the clamp and the two lead clips. */}
      {(['clamp', 'black', 'red'] as const).map((t) => {
        const [x, y] = endOf(t);
        return (
          <g key={t} className="cursor-grab" onPointerDown={onHandleDown(t)} data-handle={t}>
            <circle cx={x} cy={t === 'clamp' ? y : y - 8} r={targetR} fill="transparent" className={tool === t ? 'stroke-live-500' : 'stroke-transparent'} strokeWidth={3} />
          </g>
        );
      })}
    </EngineBay>
  );
}
