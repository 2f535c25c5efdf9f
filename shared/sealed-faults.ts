/**
 * Sealing a scenario's faults for the bench: AES-256-GCM with Web Crypto, so
 * the same code runs in the browser and on the server. The server derives a
 * per-attempt key (HMAC-SHA256 of its secret and the attempt id) and sends it
 * beside the sealed faults; the bench opens them in memory. This keeps the
 * answer key out of readable responses; it is not secrecy from a determined
 * student, which is why grading re-runs the model on the server
 * (docs/decisions/001-sealed-faults.md).
 *
 * A scenario whose parameters themselves carry a fault (an author may set
 * open diodes directly) also sends those parameters sealed; the bench then
 * runs on `unsealVehicle` instead of the healthy set. Fault events already in
 * the log (an instructor's injections) come back sealed too (`unsealEvents`).
 *
 * Sealed text: base64url of a 12-byte IV followed by the ciphertext and tag.
 */
import { z } from 'zod';
import type { Fault } from '../sim/faults.ts';
import type { VehicleParams } from '../sim/params.ts';
import { storedEventSchema, type StoredEvent } from './api/attempts.ts';
import { faultSchema, vehicleParamsSchema } from './scenario.ts';

const IV_BYTES = 12;
const KEY_BYTES = 32;

export class SealError extends Error {}

function subtle(): SubtleCrypto {
  const s = globalThis.crypto?.subtle;
  if (!s) throw new SealError('Web Crypto is not available here');
  return s;
}

export function toBase64Url(bytes: Uint8Array): string {
  let bin = '';
  for (const b of bytes) bin += String.fromCharCode(b);
  return btoa(bin).replace(/\+/g, '-').replace(/\//g, '_').replace(/=+$/, '');
}

export function fromBase64Url(text: string): Uint8Array<ArrayBuffer> {
  if (!/^[A-Za-z0-9_-]*$/.test(text)) throw new SealError('not base64url text');
  const b64 = text.replace(/-/g, '+').replace(/_/g, '/') + '='.repeat((4 - (text.length % 4)) % 4);
  let bin: string;
  try {
    bin = atob(b64);
  } catch {
    throw new SealError('not base64url text');
  }
  const out = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) out[i] = bin.charCodeAt(i);
  return out;
}

/** The bench key of one attempt: HMAC-SHA256(secret, "loadline-bench:<attemptId>"), base64url. */
export async function deriveBenchKey(secret: string, attemptId: number): Promise<string> {
  const enc = new TextEncoder();
  const hmacKey = await subtle().importKey('raw', enc.encode(secret), { name: 'HMAC', hash: 'SHA-256' }, false, ['sign']);
  const mac = await subtle().sign('HMAC', hmacKey, enc.encode(`loadline-bench:${attemptId}`));
  return toBase64Url(new Uint8Array(mac));
}

async function aesKey(benchKey: string, usage: 'encrypt' | 'decrypt'): Promise<CryptoKey> {
  const raw = fromBase64Url(benchKey);
  if (raw.length !== KEY_BYTES) throw new SealError(`the bench key must be ${KEY_BYTES} bytes`);
  return subtle().importKey('raw', raw, { name: 'AES-GCM' }, false, [usage]);
}

async function sealJson(value: unknown, benchKey: string): Promise<string> {
  const key = await aesKey(benchKey, 'encrypt');
  const iv = globalThis.crypto.getRandomValues(new Uint8Array(IV_BYTES));
  const plain = new TextEncoder().encode(JSON.stringify(value));
  const sealed = new Uint8Array(await subtle().encrypt({ name: 'AES-GCM', iv }, key, plain));
  const out = new Uint8Array(IV_BYTES + sealed.length);
  out.set(iv, 0);
  out.set(sealed, IV_BYTES);
  return toBase64Url(out);
}

async function unsealJson(sealed: string, benchKey: string): Promise<unknown> {
  const bytes = fromBase64Url(sealed);
  if (bytes.length < IV_BYTES + 16) throw new SealError('the sealed text is too short');
  const key = await aesKey(benchKey, 'decrypt');
  let plain: ArrayBuffer;
  try {
    plain = await subtle().decrypt({ name: 'AES-GCM', iv: bytes.slice(0, IV_BYTES) }, key, bytes.slice(IV_BYTES));
  } catch {
    throw new SealError('the sealed text does not open with this key');
  }
  try {
    return JSON.parse(new TextDecoder().decode(plain));
  } catch {
    throw new SealError('the sealed text is not JSON');
  }
}

export function sealFaults(faults: readonly Fault[], benchKey: string): Promise<string> {
  return sealJson(faults, benchKey);
}

/** Opens sealed faults; throws SealError on a wrong key, tampered text or content that is not a fault list. */
export async function unsealFaults(sealed: string, benchKey: string): Promise<Fault[]> {
  const parsed = z.array(faultSchema).safeParse(await unsealJson(sealed, benchKey));
  if (!parsed.success) throw new SealError('the sealed content is not a list of faults');
  return parsed.data;
}

export function sealVehicle(params: VehicleParams, benchKey: string): Promise<string> {
  return sealJson(params, benchKey);
}

/** Opens a sealed parameter set (sent when a scenario sets fault-like parameters directly). */
export async function unsealVehicle(sealed: string, benchKey: string): Promise<VehicleParams> {
  const parsed = vehicleParamsSchema.safeParse(await unsealJson(sealed, benchKey));
  if (!parsed.success) throw new SealError('the sealed content is not a vehicle parameter set');
  return parsed.data;
}

export function sealEvents(events: readonly StoredEvent[], benchKey: string): Promise<string> {
  return sealJson(events, benchKey);
}

/** Opens the logged fault events of an attempt (an instructor's injections), to merge by seq with the open ones. */
export async function unsealEvents(sealed: string, benchKey: string): Promise<StoredEvent[]> {
  const parsed = z.array(storedEventSchema).safeParse(await unsealJson(sealed, benchKey));
  if (!parsed.success) throw new SealError('the sealed content is not a list of events');
  return parsed.data;
}

/**
 * The parameters a healthy car of this spec has: the fields a fault works
 * through (failed diodes and phases, leakage, a burnt link, extra
 * resistances, a stuck draw, a stuck field driver) at their healthy values,
 * and the author's label replaced. `differs` says whether anything changed,
 * i.e. whether the real parameters must travel sealed.
 */
export function healthyVehicle(params: VehicleParams, label: string): { healthy: VehicleParams; differs: boolean } {
  const a = params.alternator;
  const w = params.wiring;
  const healthy: VehicleParams = {
    ...params,
    label,
    alternator: { ...a, openDiodes: [], shortedDiodes: [], openPhases: [], keyOffLeakageA: 0 },
    regulator: { ...params.regulator, dutyFloor01: 0 },
    wiring: { ...w, fusibleLinkOpen: false, bplusExtraOhm: 0, groundExtraOhm: 0 },
    loads: { ...params.loads, stuckDrawA: 0 },
  };
  const differs =
    a.openDiodes.length > 0 ||
    a.shortedDiodes.length > 0 ||
    a.openPhases.length > 0 ||
    a.keyOffLeakageA !== 0 ||
    params.regulator.dutyFloor01 !== 0 ||
    w.fusibleLinkOpen ||
    w.bplusExtraOhm !== 0 ||
    w.groundExtraOhm !== 0 ||
    params.loads.stuckDrawA !== 0;
  return { healthy, differs };
}
