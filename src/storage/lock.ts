/**
 * The optional notebook lock for shared workstations: a passphrase seals every stored worksheet,
 * summary and edit-log entry at rest, and the app locks itself after a chosen idle time.
 *
 * Cryptography (WebCrypto only, nothing hand-made):
 * - Key: PBKDF2 with HMAC-SHA-256 over the passphrase (Unicode NFC) and a random 16-byte salt,
 *   `PBKDF2_ITERATIONS` iterations, giving a 256-bit AES-GCM key that cannot be exported.
 *   600,000 iterations is the figure the OWASP Password Storage Cheat Sheet gives for
 *   PBKDF2-HMAC-SHA256 (2023 revision). The count is stored with the lock, so a later version can
 *   raise it for new locks and still open old ones.
 * - Sealing: AES-GCM (NIST SP 800-38D) with a fresh random 96-bit IV per record and the record's
 *   store and key as additional data, so a sealed record cannot be moved to another worksheet or
 *   position without failing to open. Fields the store needs in clear (ids, rev, log position,
 *   time of the last change) stay readable: see CLEAR_FIELDS in store.ts.
 * - Passphrase check: a known text sealed with the key is kept in the lock record. A wrong
 *   passphrase fails to open it (AES-GCM authentication), so it is refused before anything is
 *   read or written: a wrong passphrase can never damage or replace data.
 *
 * What it does not do: protect a notebook while it is unlocked on screen, or against someone who
 * can run code in the page; a forgotten passphrase cannot be recovered (export a backup first).
 *
 * No DOM: WebCrypto (`globalThis.crypto.subtle`) exists in browsers and in Node 20. Time comes
 * from the injected clock.
 */
import { z } from 'zod';
import type { Clock } from '../sheet/clock.js';
import { CLEAR_FIELDS, LOCK_META_KEY, StoreError, lockKeyId } from './store.js';
import type { MetaResult, RecordCodec, SealedStore, Store } from './store.js';

export { LOCK_META_KEY };

/** OWASP Password Storage Cheat Sheet (2023): PBKDF2-HMAC-SHA256 with 600,000 iterations. */
export const PBKDF2_ITERATIONS = 600_000;
export const SALT_BYTES = 16;
/** AES-GCM's recommended IV length, 96 bits (NIST SP 800-38D §5.2.1.1). */
export const IV_BYTES = 12;
export const MIN_PASSPHRASE_LENGTH = 8;
export const IDLE_CHOICES_MINUTES = [2, 5, 10, 15, 30, 60] as const;
export const DEFAULT_IDLE_MINUTES = 10;

const CHECK_TEXT = 'tidemark notebook lock check v1';
const CHECK_AAD = 'tidemark-lock-check';

/** The lock record kept in the notebook's meta store under LOCK_META_KEY. */
export const LockRecord = z.strictObject({
  version: z.literal(1),
  kdf: z.literal('PBKDF2-HMAC-SHA-256'),
  iterations: z.number().int().min(100_000).max(100_000_000),
  /** base64 */
  salt: z.string().min(1).max(200),
  keyId: z.string().min(8).max(64),
  check: z.strictObject({ iv: z.string().min(1).max(100), data: z.string().min(1).max(400) }),
  idleMinutes: z
    .number()
    .int()
    .min(1)
    .max(24 * 60),
});
export type LockRecord = z.infer<typeof LockRecord>;

/** The `sealed` field of a sealed record. */
const Sealed = z.strictObject({
  kid: z.string(),
  iv: z.instanceof(Uint8Array),
  data: z.instanceof(ArrayBuffer),
});

function subtle(): SubtleCrypto {
  const s = (globalThis as { crypto?: Crypto }).crypto?.subtle;
  if (!s) throw new Error('This browser has no WebCrypto (a secure context is needed): the notebook lock is not available.');
  return s;
}

function random(bytes: number): Uint8Array<ArrayBuffer> {
  return (globalThis as { crypto: Crypto }).crypto.getRandomValues(new Uint8Array(new ArrayBuffer(bytes)));
}

const encoder = new TextEncoder();
const decoder = new TextDecoder();

function utf8(text: string): Uint8Array<ArrayBuffer> {
  const bytes = encoder.encode(text);
  const out = new Uint8Array(new ArrayBuffer(bytes.length));
  out.set(bytes);
  return out;
}

export function toBase64(bytes: Uint8Array): string {
  let s = '';
  for (const b of bytes) s += String.fromCharCode(b);
  return btoa(s);
}

export function fromBase64(text: string): Uint8Array<ArrayBuffer> {
  const s = atob(text);
  const out = new Uint8Array(new ArrayBuffer(s.length));
  for (let i = 0; i < s.length; i++) out[i] = s.charCodeAt(i);
  return out;
}

/** Derives the AES-GCM key from a passphrase (PBKDF2-HMAC-SHA-256). Not extractable. */
export async function deriveKey(passphrase: string, salt: Uint8Array<ArrayBuffer>, iterations: number): Promise<CryptoKey> {
  const base = await subtle().importKey('raw', utf8(passphrase.normalize('NFC')), 'PBKDF2', false, ['deriveKey']);
  return subtle().deriveKey({ name: 'PBKDF2', salt, iterations, hash: 'SHA-256' }, base, { name: 'AES-GCM', length: 256 }, false, [
    'encrypt',
    'decrypt',
  ]);
}

/** Additional data binding a sealed record to its place. */
function aad(store: SealedStore, record: Record<string, unknown>): Uint8Array<ArrayBuffer> {
  const place = CLEAR_FIELDS[store]
    .filter((f) => f !== 'rev' && f !== 'updatedAt' && f !== 'logCount')
    .map((f) => String(record[f]))
    .join('|');
  return utf8(`tidemark:${store}:${place}`);
}

/** Seals and opens records with one AES-GCM key. */
export class AesGcmCodec implements RecordCodec {
  constructor(
    readonly keyId: string,
    private readonly key: CryptoKey,
  ) {}

  async seal(store: SealedStore, plain: Record<string, unknown>): Promise<Record<string, unknown>> {
    const clear: Record<string, unknown> = {};
    const hidden: Record<string, unknown> = {};
    const fields: readonly string[] = CLEAR_FIELDS[store];
    for (const [k, v] of Object.entries(plain)) (fields.includes(k) ? clear : hidden)[k] = v;
    const iv = random(IV_BYTES);
    const data = await subtle().encrypt({ name: 'AES-GCM', iv, additionalData: aad(store, clear) }, this.key, utf8(JSON.stringify(hidden)));
    return { ...clear, sealed: { kid: this.keyId, iv, data } };
  }

  async open(store: SealedStore, sealed: Record<string, unknown>): Promise<Record<string, unknown>> {
    const parsed = Sealed.safeParse(sealed['sealed']);
    if (!parsed.success) throw new StoreError('corrupt', `A sealed ${store} record is damaged (its sealed part cannot be read).`);
    if (parsed.data.kid !== this.keyId) {
      throw new StoreError(
        'locked',
        'This record was sealed with another passphrase (the lock was changed in another tab). Reload the page.',
      );
    }
    const { sealed: _drop, ...clear } = sealed;
    let text: string;
    try {
      const iv = new Uint8Array(new ArrayBuffer(parsed.data.iv.length));
      iv.set(parsed.data.iv);
      text = decoder.decode(await subtle().decrypt({ name: 'AES-GCM', iv, additionalData: aad(store, clear) }, this.key, parsed.data.data));
    } catch {
      throw new StoreError('corrupt', `A sealed ${store} record failed its integrity check: it was damaged or moved.`);
    }
    const hidden = JSON.parse(text) as Record<string, unknown>;
    return { ...hidden, ...clear };
  }
}

export interface NewLock {
  record: LockRecord;
  codec: AesGcmCodec;
}

/** Makes a new lock (salt, key, passphrase check) for a passphrase. Stores nothing. */
export async function createLock(passphrase: string, options: { idleMinutes?: number; iterations?: number } = {}): Promise<NewLock> {
  const problem = passphraseProblem(passphrase);
  if (problem) throw new Error(problem);
  const iterations = options.iterations ?? PBKDF2_ITERATIONS;
  const salt = random(SALT_BYTES);
  const key = await deriveKey(passphrase, salt, iterations);
  const keyId = toBase64(random(12)).replace(/[^A-Za-z0-9]/g, 'x');
  const iv = random(IV_BYTES);
  const data = new Uint8Array(
    await subtle().encrypt({ name: 'AES-GCM', iv, additionalData: utf8(CHECK_AAD) }, key, utf8(`${CHECK_TEXT}:${keyId}`)),
  );
  const record = LockRecord.parse({
    version: 1,
    kdf: 'PBKDF2-HMAC-SHA-256',
    iterations,
    salt: toBase64(salt),
    keyId,
    check: { iv: toBase64(iv), data: toBase64(data) },
    idleMinutes: options.idleMinutes ?? DEFAULT_IDLE_MINUTES,
  });
  return { record, codec: new AesGcmCodec(keyId, key) };
}

/** Why a passphrase cannot be used for a new lock, or '' when it can. */
export function passphraseProblem(passphrase: string): string {
  if (passphrase.normalize('NFC').trim().length < MIN_PASSPHRASE_LENGTH) {
    return `Use a passphrase of at least ${MIN_PASSPHRASE_LENGTH} characters (a few words are easier to remember than symbols).`;
  }
  return '';
}

export type UnlockResult = { ok: true; codec: AesGcmCodec } | { ok: false; reason: 'wrong-passphrase' | 'damaged'; message: string };

export const WRONG_PASSPHRASE_MESSAGE =
  'That passphrase does not unlock this notebook. Nothing was changed or deleted; check the keyboard layout and Caps Lock, then try again.';

/** Reads a lock record; undefined when the value is not one (damaged or absent). */
export function readLockRecord(value: unknown): LockRecord | undefined {
  const parsed = LockRecord.safeParse(value);
  return parsed.success ? parsed.data : undefined;
}

/** Checks a passphrase against a lock record. Reads and writes nothing. */
export async function unlock(record: LockRecord, passphrase: string): Promise<UnlockResult> {
  let key: CryptoKey;
  let iv: Uint8Array<ArrayBuffer>;
  let data: Uint8Array<ArrayBuffer>;
  try {
    key = await deriveKey(passphrase, fromBase64(record.salt), record.iterations);
    iv = fromBase64(record.check.iv);
    data = fromBase64(record.check.data);
  } catch {
    return { ok: false, reason: 'damaged', message: 'The lock settings of this notebook are damaged; it cannot be unlocked here.' };
  }
  let text: string;
  try {
    text = decoder.decode(await subtle().decrypt({ name: 'AES-GCM', iv, additionalData: utf8(CHECK_AAD) }, key, data));
  } catch {
    return { ok: false, reason: 'wrong-passphrase', message: WRONG_PASSPHRASE_MESSAGE };
  }
  if (text !== `${CHECK_TEXT}:${record.keyId}`) {
    return { ok: false, reason: 'damaged', message: 'The lock settings of this notebook are damaged; it cannot be unlocked here.' };
  }
  return { ok: true, codec: new AesGcmCodec(record.keyId, key) };
}

/** The notebook's lock record, `undefined` when unlocked-by-design, or 'damaged'. */
export async function storedLock(store: Pick<Store, 'getMeta'>): Promise<LockRecord | undefined | 'damaged'> {
  const value = await store.getMeta(LOCK_META_KEY);
  if (value === undefined) return undefined;
  return readLockRecord(value) ?? 'damaged';
}

/**
 * Locks the notebook with a passphrase: seals every stored record in one strict transaction.
 * The store must be unlocked (or not locked yet).
 */
export async function enableLock(
  store: Store,
  passphrase: string,
  options: { idleMinutes?: number; iterations?: number } = {},
): Promise<MetaResult & { record?: LockRecord }> {
  const problem = passphraseProblem(passphrase);
  if (problem) return { ok: false, reason: 'invalid', message: problem, problems: [problem] };
  const current = await storedLock(store);
  if (current !== undefined && store.keyId !== lockKeyId(current)) {
    return { ok: false, reason: 'failed', message: 'Unlock the notebook first.' };
  }
  const lock = await createLock(passphrase, options);
  const r = await store.reseal(lock.codec, lock.record);
  return r.ok ? { ok: true, record: lock.record } : r;
}

/** Removes the lock (the notebook must be unlocked): every record is written back in clear. */
export async function disableLock(store: Store): Promise<MetaResult> {
  const current = await storedLock(store);
  if (current === undefined) return { ok: true };
  if (current === 'damaged' || store.keyId !== current.keyId) return { ok: false, reason: 'failed', message: 'Unlock the notebook first.' };
  return store.reseal(undefined, undefined);
}

/** Changes the idle time of an existing lock (the key stays the same). */
export async function setIdleMinutes(store: Store, minutes: number): Promise<MetaResult> {
  const current = await storedLock(store);
  if (current === undefined || current === 'damaged' || store.keyId !== current.keyId) {
    return { ok: false, reason: 'failed', message: 'Unlock the notebook first.' };
  }
  return store.setMeta(LOCK_META_KEY, { ...current, idleMinutes: minutes });
}

/**
 * Idle tracking on the injected clock: `activity()` on each key press or pointer use, `check()`
 * on a timer; `onIdle` runs once when the idle time has passed since the last activity.
 */
export class IdleTimer {
  private last: number;
  private fired = false;

  constructor(
    private readonly clock: Clock,
    public idleMs: number,
    private readonly onIdle: () => void,
  ) {
    this.last = clock.now();
  }

  activity(): void {
    this.last = this.clock.now();
    this.fired = false;
  }

  /** Milliseconds until the lock, 0 when due. */
  remaining(): number {
    return Math.max(0, this.last + this.idleMs - this.clock.now());
  }

  check(): void {
    if (this.fired || this.remaining() > 0) return;
    this.fired = true;
    this.onIdle();
  }
}
