import { createCipheriv, createHmac, randomBytes } from 'node:crypto';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import vectors from '../../vectors/gcm-spec-appendix-b-aes128-test-cases-1-4.json';
import {
  aesGcmOpen,
  aesGcmSeal,
  deriveRecordKey,
  importDetailsSecret,
  recordAad,
  sealRecord,
  unsealRecord,
} from '../../../core/details/seal.ts';
import { InputError } from '../../../core/errors/input-error.ts';

const fromHex = (h: string) => Uint8Array.from(Buffer.from(h, 'hex'));
const toHex = (b: Uint8Array) => Buffer.from(b).toString('hex');

/** node:crypto (OpenSSL) as the reference implementation of AES-128-GCM. */
function nodeGcm(key: Uint8Array, iv: Uint8Array, aad: Uint8Array, plaintext: Uint8Array): string {
  const cipher = createCipheriv('aes-128-gcm', key, iv);
  cipher.setAAD(aad);
  return toHex(Buffer.concat([cipher.update(plaintext), cipher.final(), cipher.getAuthTag()]));
}

describe('AES-128-GCM through WebCrypto', () => {
  // Published vectors: McGrew and Viega, "The Galois/Counter Mode of Operation (GCM)", Appendix B.
  for (const v of vectors.cases) {
    it(`matches ${v.name} of the GCM specification, and node:crypto`, async () => {
      const [key, iv, aad, plaintext] = [v.key, v.iv, v.aad, v.plaintext].map(fromHex) as [Uint8Array, Uint8Array, Uint8Array, Uint8Array];
      const sealed = await aesGcmSeal(key, iv, aad, plaintext);
      expect(toHex(sealed)).toBe(v.ciphertext + v.tag);
      expect(nodeGcm(key, iv, aad, plaintext)).toBe(v.ciphertext + v.tag);
      expect(toHex((await aesGcmOpen(key, iv, aad, sealed))!)).toBe(v.plaintext);
    });
  }

  it('refuses any single flipped bit of the sealed bytes or the associated data', async () => {
    const v = vectors.cases[3]!;
    const [key, iv, aad, plaintext] = [v.key, v.iv, v.aad, v.plaintext].map(fromHex) as [Uint8Array, Uint8Array, Uint8Array, Uint8Array];
    const sealed = await aesGcmSeal(key, iv, aad, plaintext);
    for (const at of [0, 30, sealed.length - 17, sealed.length - 1]) {
      const bad = sealed.slice();
      bad[at]! ^= 0x01;
      expect(await aesGcmOpen(key, iv, aad, bad), `byte ${at}`).toBeNull();
    }
    const badAad = aad.slice();
    badAad[0]! ^= 0x80;
    expect(await aesGcmOpen(key, iv, badAad, sealed)).toBeNull();
  });
});

describe('record keys and sealing', () => {
  it('derives keys as HMAC-SHA256(secret, label || index || record), first 16 bytes (node:crypto as reference)', async () => {
    const secret = randomBytes(32);
    const hmac = await importDetailsSecret(secret);
    const record = new TextEncoder().encode('a padded record\0\0\0');
    for (const index of [0, 1, 255, 70_000]) {
      const label = Buffer.from('nearveil record key 1\0', 'ascii');
      const idx = Buffer.alloc(4);
      idx.writeUInt32BE(index);
      const reference = createHmac('sha256', secret).update(Buffer.concat([label, idx, record])).digest().subarray(0, 16);
      expect(toHex(await deriveRecordKey(hmac, index, record))).toBe(reference.toString('hex'));
    }
  });

  it('gives different keys for another index, another record or another secret', async () => {
    const a = await importDetailsSecret(new Uint8Array(32).fill(1));
    const b = await importDetailsSecret(new Uint8Array(32).fill(2));
    const r = new Uint8Array([1, 2, 3]);
    const keys = [await deriveRecordKey(a, 0, r), await deriveRecordKey(a, 1, r), await deriveRecordKey(a, 0, new Uint8Array([1, 2, 4])), await deriveRecordKey(b, 0, r)];
    expect(new Set(keys.map(toHex)).size).toBe(4);
  });

  it('seals with a zero IV and the index as associated data, as node:crypto computes it', async () => {
    const key = randomBytes(16);
    const record = randomBytes(100);
    const sealed = await sealRecord(key, 42, record);
    expect(toHex(sealed)).toBe(nodeGcm(key, new Uint8Array(12), recordAad(42), record));
  });

  it('opens what it sealed and refuses a changed byte, another index or another key', async () => {
    await fc.assert(
      fc.asyncProperty(fc.uint8Array({ minLength: 1, maxLength: 300 }), fc.nat(1000), fc.nat(), async (record, index, pick) => {
        const key = randomBytes(16);
        const sealed = await sealRecord(key, index, record);
        expect(await unsealRecord(key, index, sealed)).toEqual(record);
        const bad = sealed.slice();
        bad[pick % bad.length]! ^= 1 << pick % 8;
        await expect(unsealRecord(key, index, bad)).rejects.toThrow(InputError);
        await expect(unsealRecord(key, index + 1, sealed)).rejects.toThrow(/fails its authentication tag/);
        await expect(unsealRecord(randomBytes(16), index, sealed)).rejects.toThrow(/refused/);
      }),
      { numRuns: 40, seed: 20261203 },
    );
  });

  it('checks key and secret lengths', async () => {
    await expect(importDetailsSecret(new Uint8Array(16))).rejects.toThrow(/expected 32 bytes, got 16/);
    await expect(sealRecord(new Uint8Array(15), 0, new Uint8Array(1))).rejects.toThrow(/expected 16 bytes, got 15/);
    await expect(sealRecord(new Uint8Array(16), -1, new Uint8Array(1))).rejects.toThrow(RangeError);
  });
});
