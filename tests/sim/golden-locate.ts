/**
 * Where a golden run first differs. A run's digest (golden.ts) says only
 * whether anything changed; beside it, golden-checkpoints.json keeps a short
 * tag for each state field in each checkpoint window of sim time (and one for
 * each of the run's other parts: snapshots, traces, seeks, curves), recorded
 * from the same run as the digest. When a digest differs, the run's tags now
 * are compared with the recorded ones: the first window whose tags differ is
 * where the run first departs, and the fields whose tags differ there are the
 * ones that departed in it.
 *
 * The tags are 16-bit hashes of every value of the field in the window (bit
 * for bit, as the digest takes them), started afresh in each window, so one
 * window's tags do not depend on the windows before it. Two runs that differ
 * in a field and window have equal tags there only by chance (1 in 65,536), in
 * which case the field is named from a later window.
 */
import { readFileSync } from 'node:fs';

/** Sim time each recorded checkpoint window spans (record-golden.ts can record finer ones to compare by hand). */
export const CHECKPOINT_EVERY_MS = 10_000;

/** The parts of a run's digest that are not its step-by-step states, in the order the tags keep them. */
export const RUN_PARTS = ['runAttempt snapshots, their meters and the final point', 'ripple traces and rectifier solutions', 'seeks from stored snapshots', 'output curves'] as const;

/** What the checkpoints of one run hold. */
export interface RunCheckpoints {
  /** The fields tagged, in the order of each window's tags. */
  fields: string[];
  /** Per window of sim time, four hex digits per field. */
  windows: string[];
  /** Four hex digits per part of RUN_PARTS. */
  parts: string;
}

/** golden-checkpoints.json: the fields most runs tag, written once; a run that tags others lists its own. */
export interface StoredCheckpoints {
  everyMs: number;
  fields: string[];
  /** A tag of each elementary function's outputs, as golden.ts's digestMathParts takes them. */
  math: Record<string, string>;
  runs: Record<string, Omit<RunCheckpoints, 'fields'> & { fields?: string[] }>;
}

/** Recorded checkpoints, each run with its fields. */
export function readCheckpoints(file: URL | string): { everyMs: number; math: Record<string, string>; runs: Record<string, RunCheckpoints> } {
  const stored = JSON.parse(readFileSync(file, 'utf8')) as StoredCheckpoints;
  return { everyMs: stored.everyMs, math: stored.math, runs: Object.fromEntries(Object.entries(stored.runs).map(([name, r]) => [name, { fields: r.fields ?? stored.fields, windows: r.windows, parts: r.parts }])) };
}

const f64 = new Float64Array(1);
const u32 = new Uint32Array(f64.buffer);

/** One 32-bit running hash per field, over a window at a time. */
export class FieldTags {
  constructor(private readonly everyMs = CHECKPOINT_EVERY_MS) {}

  readonly fields: string[] = [];
  private readonly index = new Map<string, number>();
  private acc: number[] = [];
  private touched: boolean[] = [];
  private readonly windows: string[] = [];
  private window = 0;

  /** Starts the window that holds `timeMs`, closing the ones before it. */
  at(timeMs: number): void {
    const w = Math.floor(timeMs / this.everyMs);
    while (this.window < w) this.close();
  }

  /** Adds one value of a field to the current window. */
  add(field: string, value: unknown): void {
    let k = this.index.get(field);
    if (k === undefined) {
      k = this.fields.length;
      this.fields.push(field);
      this.index.set(field, k);
      this.acc.push(0x811c9dc5);
      this.touched.push(false);
    }
    this.acc[k] = mixValue(this.acc[k]!, value);
    this.touched[k] = true;
  }

  /** Every window's tags, the last one closed. */
  finish(): string[] {
    this.close();
    return this.windows;
  }

  private close(): void {
    let tags = '';
    for (let k = 0; k < this.fields.length; k++) {
      tags += this.touched[k] ? hex16(this.acc[k]!) : '----';
      this.acc[k] = 0x811c9dc5;
      this.touched[k] = false;
    }
    this.windows.push(tags);
    this.window++;
  }
}

function mix(h: number, x: number): number {
  h = Math.imul(h ^ x, 0x5bd1e995);
  return (h ^ (h >>> 15)) >>> 0;
}

/** Every number as its IEEE-754 bits, booleans, nulls and strings beside them, in key order (as golden.ts's digest takes them). */
function mixValue(h: number, v: unknown): number {
  if (typeof v === 'number') {
    f64[0] = v;
    return mix(mix(h, u32[0]!), u32[1]!);
  }
  if (typeof v === 'boolean') return mix(h, v ? 0x7f01 : 0x7f02);
  if (v === null || v === undefined) return mix(h, v === null ? 0x7f03 : 0x7f04);
  if (typeof v === 'string') {
    h = mix(h, 0x7f05 + v.length);
    for (let i = 0; i < v.length; i++) h = mix(h, v.charCodeAt(i));
    return h;
  }
  if (Array.isArray(v)) {
    h = mix(h, 0x7f06 + v.length);
    for (const x of v) h = mixValue(h, x);
    return h;
  }
  if (typeof v === 'object') {
    for (const key of Object.keys(v)) h = mixValue(mixValue(h, key), (v as Record<string, unknown>)[key]);
    return h;
  }
  return mix(h, 0x7f07);
}

function hex16(h: number): string {
  h = Math.imul(h ^ (h >>> 16), 0x85ebca6b);
  h = Math.imul(h ^ (h >>> 13), 0xc2b2ae35);
  h = (h ^ (h >>> 16)) >>> 0;
  return ((h >>> 16) ^ (h & 0xffff)).toString(16).padStart(4, '0');
}

/** A hash's first four hex digits, as a part's tag. */
export const partTag = (hexDigest: string): string => hexDigest.slice(0, 4);

const seconds = (ms: number) => `${ms / 1000} s`;
const tagsOf = (s: string): string[] => s.match(/.{4}/g) ?? [];

/**
 * Says where a run now first differs from its recorded checkpoints: the first
 * window of sim time whose tags differ and the fields that differ in it, or
 * the parts that differ when every step's state agrees. Null when nothing the
 * checkpoints hold differs.
 */
export function locateDifference(recorded: RunCheckpoints | undefined, now: RunCheckpoints, everyMs = CHECKPOINT_EVERY_MS): string | null {
  if (!recorded) return 'no checkpoints are recorded for this run (record them: see golden-runs.test.ts)';
  const added = now.fields.filter((f) => !recorded.fields.includes(f));
  const removed = recorded.fields.filter((f) => !now.fields.includes(f));
  const lines: string[] = [];
  if (added.length || removed.length) lines.push(`the state's fields changed: ${added.length ? `new ${added.join(', ')}` : ''}${added.length && removed.length ? '; ' : ''}${removed.length ? `gone ${removed.join(', ')}` : ''}`);
  const common = now.fields.filter((f) => recorded.fields.includes(f));
  const windows = Math.max(recorded.windows.length, now.windows.length);
  for (let w = 0; w < windows; w++) {
    const was = tagsOf(recorded.windows[w] ?? '');
    const is = tagsOf(now.windows[w] ?? '');
    const from = w * everyMs;
    if (!recorded.windows[w] || !now.windows[w]) {
      lines.push(`the run ${recorded.windows[w] ? 'now ends' : 'now goes on'} at ${seconds(from)} of sim time (recorded: ${recorded.windows.length} windows of ${seconds(everyMs)})`);
      break;
    }
    const differ = common.filter((f) => was[recorded.fields.indexOf(f)] !== is[now.fields.indexOf(f)]);
    if (differ.length) {
      const when = `first differs between ${seconds(from)} and ${seconds(from + everyMs)} of sim time (earlier windows agree)`;
      lines.push(differ.length === 1 ? `${when}, in the field ${differ[0]} alone` : `${when}, in ${differ.length} of ${common.length} fields, in the state's order: ${differ.join(', ')}`);
      break;
    }
  }
  const parts = RUN_PARTS.filter((_, k) => tagsOf(recorded.parts)[k] !== tagsOf(now.parts)[k]);
  if (parts.length) lines.push(`${lines.length ? 'also ' : 'every step\'s state agrees; '}the run's ${parts.join(', ')} differ`);
  return lines.length ? lines.join('; ') : null;
}
