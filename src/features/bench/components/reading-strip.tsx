/**
 * The reading strip: every readout in one row with its unit. Digits refresh
 * on the engine's display ticks (ten times a second), the way a bench meter
 * settles; a recorded reading is exactly what is shown. A screen reader hears
 * a polite summary every few seconds when something has changed.
 */
import { useEffect, useRef, useState, useSyncExternalStore, type ReactNode } from 'react';
import type { Readings } from '../../../../sim/instruments.ts';
import { useBench, useBenchEngine } from '../hooks/use-bench.ts';
import { createVoltHold, type VoltHoldStore } from '../stores/volt-hold.ts';
import { formatAmps, formatDrawMa, formatRippleMv, formatRpm, formatVolts, spokenReading, UNITS } from './reading-format.ts';

const ANNOUNCE_INTERVAL_MS = 3000;

export interface StripValues {
  volts: string;
  amps: string;
  rpm: string;
  ripple: string;
  draw: string;
}

export function stripValues(r: Readings): StripValues {
  return {
    volts: formatVolts(r.voltmeterV),
    amps: formatAmps(r.clampA),
    rpm: formatRpm(r.tachRpm),
    ripple: formatRippleMv(r.rippleVac),
    draw: formatDrawMa(r.ammeterA),
  };
}

function Readout({
  label,
  shortLabel,
  value,
  unit,
  testId,
  extra,
  below,
}: {
  label: string;
  /** The label on a phone, where a control shares the cell. */
  shortLabel?: string;
  value: string;
  unit: string;
  testId: string;
  extra?: ReactNode;
  below?: ReactNode;
}) {
  return (
    <div className={`relative min-w-0 px-3 py-1.5 lg:py-2 ${below ? 'pb-4 lg:pb-4' : ''}`}>
      <dt className="flex min-w-0 items-center justify-between gap-1">
        <span className="truncate text-[11px] font-medium uppercase tracking-wide text-slate-300">
          {shortLabel ? (
            <>
              <span className="sm:hidden">{shortLabel}</span>
              <span className="max-sm:hidden">{label}</span>
            </>
          ) : (
            label
          )}
        </span>
        {extra}
      </dt>
      <dd className="flex min-w-0 items-baseline gap-1">
        <span data-testid={testId} className={`font-mono text-xl font-semibold tabular-nums sm:text-2xl xl:text-3xl ${value === '—' ? 'text-slate-400' : 'text-live-300'}`}>
          {value}
        </span>
        <span className="truncate text-xs text-slate-300 sm:text-sm">{unit}</span>
      </dd>
      {below}
    </div>
  );
}

/**
 * The voltmeter's min/max hold: a switch by the volts, and while it is on the
 * lowest and highest volts shown since, with a reset.
 */
function VoltHoldSwitch({ store }: { store: VoltHoldStore }) {
  const hold = useSyncExternalStore(store.subscribe, store.get, store.get);
  const button = 'rounded px-1.5 text-[11px] font-semibold ring-1 focus-visible:outline-2 focus-visible:outline-live-300';
  return (
    <span className="flex shrink-0 items-center gap-1">
      {hold.on && (
        <button type="button" onClick={store.reset} className={`${button} text-slate-200 ring-slate-600 hover:bg-slate-800`} aria-label="Reset the min/max hold">
          Reset
        </button>
      )}
      <button
        type="button"
        aria-pressed={hold.on}
        onClick={store.toggle}
        className={`${button} ${hold.on ? 'bg-live-300 text-slate-900 ring-live-300' : 'text-slate-200 ring-slate-600 hover:bg-slate-800'}`}
        aria-label="Min/max hold on the voltmeter"
      >
        Min/max
      </button>
    </span>
  );
}

/** The held values under the volts, while the hold is on. */
function HoldValues({ store }: { store: VoltHoldStore }) {
  const hold = useSyncExternalStore(store.subscribe, store.get, store.get);
  if (!hold.on) return null;
  const v = (x: number | null) => (x === null ? '—' : formatVolts(x));
  return (
    <dd className="absolute bottom-0.5 left-3 right-3 truncate font-mono text-[11px] tabular-nums text-live-300" data-testid="volt-hold">
      min {v(hold.min)} · max {v(hold.max)} V
    </dd>
  );
}

export function ReadingStrip() {
  const engine = useBenchEngine();
  const [hold] = useState(() => createVoltHold(engine));
  const readings = useBench((s) => s.display.readings);
  // The bench time of the display tick shown, for a page to tell that the readouts have moved on.
  const atMs = useBench((s) => s.display.atMs);
  const v = stripValues(readings);
  const drawUnit = v.draw.endsWith(' A') ? '' : UNITS.draw;
  return (
    <div className="rounded-xl bg-slate-900 shadow-sm" data-testid="reading-strip" data-at-ms={atMs}>
      <dl className="grid grid-cols-3 gap-y-1 divide-slate-800 sm:grid-cols-5 sm:divide-x">
        <Readout label="Volts (DC)" shortLabel="Volts" value={v.volts} unit={UNITS.volts} testId="reading-volts" extra={<VoltHoldSwitch store={hold} />} below={<HoldValues store={hold} />} />
        <Readout label="Amps (clamp)" value={v.amps} unit={UNITS.amps} testId="reading-amps" />
        <Readout label="Engine" value={v.rpm} unit={UNITS.rpm} testId="reading-rpm" />
        <Readout label="Ripple" value={v.ripple} unit={UNITS.ripple} testId="reading-ripple" />
        <Readout label="Draw" value={v.draw} unit={drawUnit} testId="reading-draw" />
      </dl>
      <StripAnnouncer values={v} />
    </div>
  );
}

/** Polite, throttled words for screen readers: not every frame. */
function StripAnnouncer({ values }: { values: StripValues }) {
  const [text, setText] = useState('');
  const latest = useRef(values);
  latest.current = values;
  useEffect(() => {
    const id = setInterval(() => {
      const v = latest.current;
      const next = [
        spokenReading('volts', v.volts),
        spokenReading('amps', v.amps),
        spokenReading('rpm', v.rpm),
        v.ripple !== '—' ? spokenReading('ripple', v.ripple) : '',
        v.draw !== '—' ? spokenReading('draw', v.draw) : '',
      ]
        .filter(Boolean)
        .join('. ');
      setText((prev) => (prev === next ? prev : next));
    }, ANNOUNCE_INTERVAL_MS);
    return () => clearInterval(id);
  }, []);
  return (
    <p aria-live="polite" className="sr-only" data-testid="reading-announcer">
      {text}
    </p>
  );
}
