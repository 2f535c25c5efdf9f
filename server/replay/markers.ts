/**
 * The moments of an attempt worth jumping to in a replay: hook-ups (leads,
 * clamp, series ammeter), engine starts, load changes (pile and accessories),
 * the instructor's injections (where the server applied them), recorded
 * readings, the scenario's hints the student opened, and the submission.
 */
import type { InputEvent } from '../../sim/inputs.ts';
import { recordedReadingSchema } from '../../shared/api/attempts.ts';
import type { Marker, ReplayReading } from '../../shared/api/replay.ts';
import { CONDUCTOR_WORDS, POINT_WORDS } from '../../shared/bench-words.ts';
import { dialPercent } from '../../shared/dial.ts';
import { shownWithUnit } from '../../shared/meter-display.ts';
import { DIAGNOSTIC_TEST_LABELS } from '../../shared/scenario.ts';

function markerOf(e: InputEvent, changeLabels: Readonly<Record<string, string>>, accessories: readonly { id: string; label: string }[]): Marker | null {
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
      return { atMs: e.atMs, kind: 'load', label: `Pile to ${dialPercent(e.dial01)} %` };
    case 'accessory':
      return { atMs: e.atMs, kind: 'load', label: `${accessories.find((a) => a.id === e.id)?.label ?? 'An accessory'} ${e.on ? 'on' : 'off'}` };
    case 'change-apply':
      return { atMs: e.atMs, kind: 'fault', label: changeLabels[e.change.id] ? `Injected: ${changeLabels[e.change.id]}` : 'Instructor’s injection' };
    case 'change-clear':
      return { atMs: e.atMs, kind: 'fault', label: 'Injected fault cleared' };
    default:
      return null;
  }
}

export function replayMarkers(
  events: readonly InputEvent[],
  readings: readonly ReplayReading[],
  submittedAtMs: number | null,
  changeLabels: Readonly<Record<string, string>>,
  accessories: readonly { id: string; label: string }[] = [],
  hints: readonly { atMs: number; index: number }[] = [],
): Marker[] {
  const out: Marker[] = [];
  for (const e of events) {
    const m = markerOf(e, changeLabels, accessories);
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
    const verdict = r.evidence === true ? 'evidence' : r.evidence === false ? 'not evidence' : r.inSetup ? 'inside the set-up' : 'outside the set-up';
    out.push({ atMs: Math.round(r.atMs), kind: 'reading', label: `${DIAGNOSTIC_TEST_LABELS[r.test]}: ${shownWithUnit(r.value, r.unit)} (${verdict})` });
  }
  for (const h of hints) out.push({ atMs: Math.round(h.atMs), kind: 'hint', label: `Hint ${h.index + 1} opened` });
  if (submittedAtMs !== null) out.push({ atMs: submittedAtMs, kind: 'submission', label: 'Submitted' });
  return out.sort((a, b) => a.atMs - b.atMs);
}

/**
 * The readings of a result with where each was taken (from the stored
 * readings). A result from before readings were checked against their
 * set-ups has no checks: its stored readings are listed as they were written.
 */
export function replayReadings(checks: readonly Omit<ReplayReading, 'where'>[] | null, stored: unknown): ReplayReading[] {
  const parsed = (Array.isArray(stored) ? stored : []).flatMap((x) => {
    const r = recordedReadingSchema.safeParse(x);
    return r.success ? [r.data] : [];
  });
  if (checks === null || (checks.length === 0 && parsed.length > 0)) {
    return parsed.map((r) => ({
      ...r,
      shown: null,
      valueOk: null,
      inSetup: false,
      evidence: null,
      reason: 'Recorded before readings were checked against their test’s set-up.',
      unmet: [],
    }));
  }
  const where = new Map(parsed.map((r) => [r.id, r.where]));
  return checks.map((c) => ({ ...c, where: where.get(c.id) ?? '' }));
}
