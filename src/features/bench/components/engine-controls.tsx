/**
 * The key, the assistant's throttle (a held engine speed) and the vehicle's
 * accessory switches.
 */
import type { KeyboardEvent } from 'react';
import type { KeyPosition } from '../../../../sim/inputs.ts';
import { Button } from '../../../components/ui/button.tsx';
import { benchActions } from '../stores/bench-actions.ts';
import { useBench, useBenchDispatch } from '../hooks/use-bench.ts';

const KEY_LABELS: Record<KeyPosition, string> = { off: 'Off', on: 'On', start: 'Start' };

export function KeySwitch() {
  const key = useBench((s) => s.controls.key);
  const dispatch = useBenchDispatch();
  return (
    <div role="group" aria-label="Ignition key" className="inline-flex rounded-lg bg-slate-200 p-1">
      {(['off', 'on', 'start'] as const).map((k) => (
        <button
          key={k}
          type="button"
          aria-pressed={key === k}
          onClick={() => dispatch(benchActions.turnKey(k))}
          className={`min-h-8 whitespace-nowrap rounded-md px-3 py-1 text-sm font-medium ${key === k ? 'bg-slate-900 text-white shadow' : 'text-slate-700 hover:bg-white'}`}
        >
          {k === 'start' ? 'Start' : `Key ${KEY_LABELS[k].toLowerCase()}`}
        </button>
      ))}
    </div>
  );
}

export const RPM_PRESETS = [0, 1500, 2000, 2500] as const;
const RPM_STEP = 50;

/** The held speed a key press asks for, or null. */
export function rpmKeyValue(key: string, held: number, idle: number, max: number): number | null {
  const from = Math.max(held, idle);
  const clampTo = (x: number) => Math.min(max, Math.max(idle, x));
  switch (key) {
    case 'ArrowUp':
    case 'ArrowRight':
      return clampTo(from + RPM_STEP);
    case 'ArrowDown':
    case 'ArrowLeft':
      return clampTo(from - RPM_STEP);
    case 'PageUp':
      return clampTo(from + 500);
    case 'PageDown':
      return clampTo(from - 500);
    case 'Home':
      return idle;
    case 'End':
      return max;
    default:
      return null;
  }
}

export function RpmControl({ idleRpm, maxRpm }: { idleRpm: number; maxRpm: number }) {
  const held = useBench((s) => s.controls.heldRpm);
  const dispatch = useBenchDispatch();
  const value = Math.max(held, idleRpm);
  const pct = ((value - idleRpm) / (maxRpm - idleRpm)) * 100;
  const set = (rpm: number) => dispatch(benchActions.holdRpm(rpm <= idleRpm ? 0 : rpm));
  const onKeyDown = (e: KeyboardEvent<HTMLDivElement>) => {
    const next = rpmKeyValue(e.key, held, idleRpm, maxRpm);
    if (next === null) return;
    e.preventDefault();
    set(next);
  };
  const fromPointer = (clientX: number, el: HTMLElement) => {
    const box = el.getBoundingClientRect();
    const f = Math.min(1, Math.max(0, (clientX - box.left) / box.width));
    set(Math.round((idleRpm + f * (maxRpm - idleRpm)) / RPM_STEP) * RPM_STEP);
  };
  const valueText = held <= idleRpm ? `idle, ${idleRpm} rpm` : `${value} rpm held`;
  return (
    <div className="space-y-1.5">
      <div className="flex items-baseline justify-between text-sm">
        <span className="font-medium text-slate-800" id="rpm-label">
          Assistant holds
        </span>
        <span className="font-mono text-slate-700">{held <= idleRpm ? 'idle' : `${value.toLocaleString('en-US')} rpm`}</span>
      </div>
      <div
        role="slider"
        tabIndex={0}
        aria-labelledby="rpm-label"
        aria-valuemin={idleRpm}
        aria-valuemax={maxRpm}
        aria-valuenow={value}
        aria-valuetext={valueText}
        onKeyDown={onKeyDown}
        onPointerDown={(e) => {
          e.currentTarget.setPointerCapture(e.pointerId);
          fromPointer(e.clientX, e.currentTarget);
        }}
        onPointerMove={(e) => {
          if (e.currentTarget.hasPointerCapture(e.pointerId)) fromPointer(e.clientX, e.currentTarget);
        }}
        className="relative mx-3 h-7 cursor-pointer touch-none rounded-full bg-slate-200"
      >
        <div className="absolute inset-y-0 left-0 rounded-full bg-live-500/80" style={{ width: `${pct}%` }} />
        <div className="absolute top-1/2 h-6 w-6 -translate-x-1/2 -translate-y-1/2 rounded-full bg-white shadow ring-2 ring-live-600" style={{ left: `${pct}%` }} />
      </div>
      <div className="flex flex-wrap gap-1">
        {RPM_PRESETS.map((rpm) => (
          <Button key={rpm} variant={(rpm === 0 ? held <= idleRpm : held === rpm) ? 'primary' : 'secondary'} size="sm" onClick={() => set(rpm)}>
            {rpm === 0 ? 'Idle' : rpm.toLocaleString('en-US')}
          </Button>
        ))}
        <Button variant="ghost" size="sm" className="px-2" aria-label="50 rpm slower" onClick={() => set(Math.max(idleRpm, value - RPM_STEP))}>
          −50
        </Button>
        <Button variant="ghost" size="sm" className="px-2" aria-label="50 rpm faster" onClick={() => set(Math.min(maxRpm, value + RPM_STEP))}>
          +50
        </Button>
      </div>
    </div>
  );
}

export function AccessorySwitches({ accessories }: { accessories: readonly { id: string; label: string }[] }) {
  const on = useBench((s) => s.controls.accessoriesOn.join(','));
  const dispatch = useBenchDispatch();
  const set = new Set(on ? on.split(',') : []);
  return (
    <div role="group" aria-label="Accessory switches" className="flex flex-wrap gap-1.5">
      {accessories.map((a) => {
        const isOn = set.has(a.id);
        return (
          <button
            key={a.id}
            type="button"
            aria-pressed={isOn}
            onClick={() => dispatch(benchActions.switchAccessory(a.id, !isOn))}
            className={`rounded-md px-2.5 py-1 text-xs font-medium ring-1 ${isOn ? 'bg-live-50 text-live-700 ring-live-500' : 'bg-white text-slate-600 ring-slate-300 hover:bg-slate-50'}`}
          >
            {a.label}
          </button>
        );
      })}
    </div>
  );
}
