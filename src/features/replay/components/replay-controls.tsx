/** Play, pause, speed, the scrubber and the markers of a replay. */
import type { Marker, ReplayComment } from '../../../../shared/api/replay.ts';
import { MARKER_LABELS } from '../../../../shared/api/replay.ts';
import { Button } from '../../../components/ui/button.tsx';
import { REPLAY_SPEEDS, type ReplayPlayer, type ReplaySpeed } from '../hooks/use-replay-player.ts';

export function clock(ms: number): string {
  const s = Math.floor(ms / 1000);
  return `${Math.floor(s / 60)}:${String(s % 60).padStart(2, '0')}.${String(Math.floor((ms % 1000) / 100))}`;
}

const MARKER_CLASS: Record<Marker['kind'], string> = {
  'hook-up': 'bg-slate-500',
  start: 'bg-slate-800',
  load: 'bg-warn-500',
  fault: 'bg-stop-600',
  reading: 'bg-live-500',
  hint: 'bg-slate-300 ring-1 ring-slate-600',
  submission: 'bg-slate-900',
};

export function ReplayControls({ player, markers, comments }: { player: ReplayPlayer; markers: readonly Marker[]; comments: readonly ReplayComment[] }) {
  const { timeMs, durationMs } = player;
  const pos = (ms: number) => `${(100 * ms) / Math.max(1, durationMs)}%`;
  return (
    <div className="space-y-3">
      <div className="flex flex-wrap items-center gap-3">
        <Button onClick={player.playing ? player.pause : player.play}>{player.playing ? 'Pause' : 'Play'}</Button>
        <label className="flex items-center gap-2 text-sm text-slate-700">
          Speed
          <select value={player.speed} onChange={(e) => player.setSpeed(Number(e.target.value) as ReplaySpeed)} className="rounded-md bg-white px-2 py-1 text-sm ring-1 ring-slate-300">
            {REPLAY_SPEEDS.map((s) => (
              <option key={s} value={s}>
                {s}×
              </option>
            ))}
          </select>
        </label>
        <span className="font-mono text-sm text-slate-700" aria-live="off">
          <span data-testid="replay-time">{clock(timeMs)}</span> / {clock(durationMs)}
        </span>
      </div>
      <div className="relative pt-4">
        <div className="pointer-events-none absolute inset-x-0 top-0 h-3" aria-hidden="true">
          {markers.map((m, i) => (
            <span key={i} title={m.label} className={`absolute top-0 h-3 w-1 -translate-x-1/2 rounded ${MARKER_CLASS[m.kind]}`} style={{ left: pos(m.atMs) }} />
          ))}
          {comments.map((c) => (
            <span key={`c${c.id}`} className="absolute -top-1 h-2 w-2 -translate-x-1/2 rounded-full bg-live-700" style={{ left: pos(c.simTimeMs) }} />
          ))}
        </div>
        <input
          type="range"
          min={0}
          max={durationMs}
          step={100}
          value={timeMs}
          onChange={(e) => player.seek(Number(e.target.value))}
          aria-label="Replay position"
          aria-valuetext={`${clock(timeMs)} of ${clock(durationMs)}`}
          className="w-full accent-live-600"
        />
      </div>
      <details className="text-sm">
        <summary className="cursor-pointer font-medium text-slate-700">Markers ({markers.length})</summary>
        <ul className="mt-2 max-h-56 space-y-1 overflow-y-auto">
          {markers.map((m, i) => (
            <li key={i}>
              <button type="button" onClick={() => player.seek(m.atMs)} className="flex w-full items-center gap-2 rounded px-1 py-0.5 text-left hover:bg-stone-100">
                <span aria-hidden="true" className={`h-2.5 w-2.5 shrink-0 rounded-sm ${MARKER_CLASS[m.kind]}`} />
                <span className="font-mono text-slate-500">{clock(m.atMs)}</span>
                <span className="text-slate-500">{MARKER_LABELS[m.kind]}:</span>
                <span className="text-slate-800">{m.label}</span>
              </button>
            </li>
          ))}
        </ul>
      </details>
    </div>
  );
}
