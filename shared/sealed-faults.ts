/**
 * Sealing a scenario's faults for the bench: AES-256-GCM with Web Crypto, so
 * the same code runs in the browser and on the server. The server derives a
 * per-attempt key (HMAC-SHA256 of its secret and the attempt id) and sends it
 * beside the sealed faults; the bench opens them in memory. This keeps the
 * answer key out of readable responses; it is not secrecy from a determined
 * student, which is why grading re-runs the model on the server
 * (docs/decisions/001-sealed-faults.md).
 *
 * Sealed text: base64url of a 12-byte IV followed by the ciphertext and tag.
 */
import { z } from 'zod';
import type { Fault } from '../sim/faults.ts';
import { faultSchema } from './api/attempts.ts';

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

export async function sealFaults(faults: readonly Fault[], benchKey: string): Promise<string> {
  const key = await aesKey(benchKey, 'encrypt');
  const iv = globalThis.crypto.getRandomValues(new Uint8Array(IV_BYTES));
  const plain = new TextEncoder().encode(JSON.stringify(faults));
  const sealed = new Uint8Array(await subtle().encrypt({ name: 'AES-GCM', iv }, key, plain));
  const out = new Uint8Array(IV_BYTES + sealed.length);
  out.set(iv, 0);
  out.set(sealed, IV_BYTES);
  return toBase64Url(out);
}

/** Opens sealed faults; throws SealError on a wrong key, tampered text or content that is not a fault list. */
export async function unsealFaults(sealed: string, benchKey: string): Promise<Fault[]> {
  const bytes = fromBase64Url(sealed);
  if (bytes.length < IV_BYTES + 16) throw new SealError('sealed faults are too short');
  const key = await aesKey(benchKey, 'decrypt');
  let plain: ArrayBuffer;
  try {
    plain = await subtle().decrypt({ name: 'AES-GCM', iv: bytes.slice(0, IV_BYTES) }, key, bytes.slice(IV_BYTES));
  } catch {
    throw new SealError('the sealed faults do not open with this key');
  }
  let json: unknown;
  try {
    json = JSON.parse(new TextDecoder().decode(plain));
  } catch {
    throw new SealError('the sealed faults are not JSON');
  }
  const parsed = z.array(faultSchema).safeParse(json);
  if (!parsed.success) throw new SealError('the sealed content is not a list of faults');
  return parsed.data;
}
