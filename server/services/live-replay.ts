/**
 * The moments of an attempt worth jumping to in a replay: hook-ups (leads,
 * clamp, series ammeter), engine starts, load changes (pile and accessories),
 * injected faults, recorded readings and the submission.
 */
import { FAULT_CATALOG } from '../../sim/faults.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import type { Marker, ReplayReading } from '../../shared/api/replay.ts';
import { CONDUCTOR_WORDS, POINT_WORDS } from '../../shared/bench-words.ts';
import { DIAGNOSTIC_TEST_LABELS } from '../../shared/scenario.ts';
import type { StoredInput } from './live-attempt-run.ts';

function markerOf(e: InputEvent, source: string, accessories: readonly { id: string; label: string }[]): Marker | null {
  switch (e.kind) {
    case 'lead':
      return e.point ? { atMs: e.atMs, kind: 'hook-up', label: `${e.which === 'red' ? 'Red' : 'Black'} lead on ${POINT_WORDS[e.point]}` } : null;
    case 'clamp':
      return e.conductor ? { atMs: e.atMs, kind: 'hook-up', label: `Clamp on ${CONDUCTOR_WORDS[e.conductor]}, arrow ${e.arrow === 'toward-battery' ? 'toward the battery' : 'toward the alternator'}` } : null;
    case 'ammeter':
      return e.inSeries ? { atMs: e.atMs, kind: 'hook-up', label: 'Ammeter in series' } : null;
    case 'key':
      return e.position === 'start' ? { atMs: e.atMs, kind: 'start', label: 'Engine start' } : null;
    case 'pile':
      return { atMs: e.atMs, kind: 'load', label: `Pile to ${Math.round(e.dial01 * 100)} %` };
    case 'accessory':
      return { atMs: e.atMs, kind: 'load', label: `${accessories.find((a) => a.id === e.id)?.label ?? 'An accessory'} ${e.on ? 'on' : 'off'}` };
    case 'fault-inject':
      return source === 'instructor' ? { atMs: e.atMs, kind: 'fault', label: `Injected: ${FAULT_CATALOG[e.fault.kind].label}` } : null;
    case 'fault-clear':
      return source === 'instructor' ? { atMs: e.atMs, kind: 'fault', label: 'Injected fault cleared' } : null;
    default:
      return null;
  }
}

export function replayMarkers(
  stored: readonly StoredInput[],
  readings: readonly ReplayReading[],
  submittedAtMs: number | null,
  accessories: readonly { id: string; label: string }[] = [],
): Marker[] {
  const out: Marker[] = [];
  for (const s of stored) {
    const m = markerOf(s.event, s.source, accessories);
    if (!m) continue;
    // A run of pile turns within a second is one load change.
    const prev = out.at(-1);
    if (m.kind === 'load' && prev?.kind === 'load' && m.atMs - prev.atMs < 1_000 && m.label.startsWith('Pile') && prev.label.startsWith('Pile')) {
      out[out.length - 1] = { ...m, atMs: prev.atMs };
      continue;
    }
    out.push(m);
  }
  for (const r of readings) {
    const label = r.test in DIAGNOSTIC_TEST_LABELS ? DIAGNOSTIC_TEST_LABELS[r.test as keyof typeof DIAGNOSTIC_TEST_LABELS] : 'Reading';
    out.push({ atMs: Math.round(r.atMs), kind: 'reading', label: `${label}: ${r.value} ${r.unit}` });
  }
  if (submittedAtMs !== null) out.push({ atMs: submittedAtMs, kind: 'submission', label: 'Submitted' });
  return out.sort((a, b) => a.atMs - b.atMs);
}

/** Recorded readings from the stored submission (read leniently). */
export function storedReadings(raw: unknown): ReplayReading[] {
  const list = Array.isArray(raw) ? raw : Array.isArray((raw as { readings?: unknown } | null)?.readings) ? (raw as { readings: unknown[] }).readings : [];
  return list.flatMap((x) => {
    if (typeof x !== 'object' || x === null) return [];
    const r = x as Record<string, unknown>;
    if (typeof r.value !== 'number' || typeof r.atMs !== 'number') return [];
    return [
      {
        id: String(r.id ?? ''),
        test: String(r.test ?? ''),
        quantity: String(r.quantity ?? ''),
        value: r.value,
        unit: String(r.unit ?? ''),
        atMs: r.atMs,
        where: String(r.where ?? ''),
      },
    ];
  });
}
