import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../../core/errors/input-error.ts';
import {
  answerByteLength,
  decodeAnswer,
  decodeModulusProof,
  decodeQuery,
  decodeQueryModulus,
  encodeAnswer,
  encodeModulusProof,
  encodeQuery,
  proofByteLength,
  queryByteLength,
} from '../../../core/pir/wire.ts';

function wireError(f: () => unknown): InputError {
  try {
    f();
  } catch (e) {
    expect(e).toBeInstanceOf(InputError);
    const err = e as InputError;
    expect([err.code, err.field]).toEqual(['wire_format', 'body']);
    return err;
  }
  throw new Error('expected an InputError, nothing was thrown');
}

// A 2048-bit odd "modulus": no key is needed to test the byte layout.
const n = (1n << 2047n) + 12345n;
const values = [1n, n - 1n, 0x0102n];

describe('wire layout (as documented in core/pir/WIRE.md)', () => {
  it('writes the query header, then n and the values as k-byte big-endian numbers', () => {
    const body = encodeQuery(n, values);
    expect(Array.from(body.subarray(0, 10))).toEqual([0x4e, 0x56, 0x51, 1, 0x01, 0x00, 0, 0, 0, 3]);
    expect(body.length).toBe(10 + 256 * 4);
    expect(body.length).toBe(queryByteLength(2048, 3));
    expect(body[10]).toBe(0x80);
    expect(Array.from(body.subarray(body.length - 3))).toEqual([0, 1, 2]);
    expect(decodeQuery(body)).toEqual({ n, values });
  });

  it('writes the answer header and rows', () => {
    const body = encodeAnswer(384, [5n, 7n]);
    expect(Array.from(body.subarray(0, 10))).toEqual([0x4e, 0x56, 0x41, 1, 0x01, 0x80, 0, 0, 0, 2]);
    expect(body.length).toBe(answerByteLength(3072, 2));
    expect(decodeAnswer(body)).toEqual({ modulusBytes: 384, rows: [5n, 7n] });
  });

  it('round-trips any numbers that fit (fast-check)', () => {
    fc.assert(
      fc.property(fc.bigInt({ min: 1n, max: 1n << 300n }), fc.array(fc.bigInt({ min: 0n, max: 1n << 300n }), { minLength: 1, maxLength: 20 }), (m, xs) => {
        const limited = xs.map((x) => x % (m + 1n));
        const back = decodeQuery(encodeQuery(m, limited));
        const answer = decodeAnswer(encodeAnswer(40, xs));
        return back.n === m && back.values.every((v, i) => v === limited[i]) && answer.rows.every((v, i) => v === xs[i]);
      }),
      { seed: 20261203 },
    );
  });

  it('refuses to encode what does not fit', () => {
    expect(() => encodeQuery(n, [n << 8n])).toThrow(RangeError);
    expect(() => encodeQuery(n, [])).toThrow(/expected integer value count in \[1, 4294967295\], got 0/);
    expect(() => encodeAnswer(0, [1n])).toThrow(RangeError);
    expect(() => encodeAnswer(1, [256n])).toThrow(RangeError);
    expect(() => queryByteLength(2048, 0)).toThrow(RangeError);
  });
});

describe('malformed bodies are wire_format errors', () => {
  const query = encodeQuery(n, values);
  const answer = encodeAnswer(256, [3n, 4n]);

  it('a body shorter than the header', () => {
    expect(wireError(() => decodeQuery(query.subarray(0, 9))).message).toBe('body: expected at least 10 header bytes for a query, got 9');
    wireError(() => decodeAnswer(new Uint8Array(0)));
  });

  it('a truncated body', () => {
    expect(wireError(() => decodeQuery(query.subarray(0, query.length - 1))).message).toBe(
      `body: expected ${query.length} bytes for width 256 and count 3, got ${query.length - 1}`,
    );
    wireError(() => decodeAnswer(answer.subarray(0, 10 + 256)));
  });

  it('extra bytes after the last number', () => {
    const longer = new Uint8Array(query.length + 1);
    longer.set(query);
    expect(wireError(() => decodeQuery(longer)).message).toMatch(/expected 1034 bytes .* got 1035/);
  });

  it('wrong magic, including an answer given as a query', () => {
    expect(wireError(() => decodeQuery(answer)).message).toBe('body: expected magic "NVQ" for a query, got bytes 4e 56 41');
    wireError(() => decodeAnswer(query));
  });

  it('an unknown version', () => {
    const v2 = query.slice();
    v2[3] = 2;
    expect(wireError(() => decodeQuery(v2)).message).toBe('body: expected format version 1, got 2');
  });

  it('zero count or zero width', () => {
    wireError(() => decodeQuery(Uint8Array.from([0x4e, 0x56, 0x51, 1, 0, 1, 0, 0, 0, 0, 9])));
    expect(wireError(() => decodeAnswer(Uint8Array.from([0x4e, 0x56, 0x41, 1, 0, 0, 0, 0, 0, 1]))).message).toMatch(/width >= 1, got 0/);
  });

  it('a header claiming far more data than the body holds is refused before any allocation', () => {
    const huge = Uint8Array.from([0x4e, 0x56, 0x41, 1, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 1, 2, 3]);
    expect(wireError(() => decodeAnswer(huge)).message).toBe(`body: expected ${10 + 65535 * 4294967295} bytes for width 65535 and count 4294967295, got 13`);
  });
});

describe('modulus proof bodies (WIRE.md, "Modulus proof body")', () => {
  const proof = { n, c: 3n, d: n - 2n, roots: [1n, 0x0203n] };

  it('writes NVP, the root count, then n, c, d and the roots', () => {
    const body = encodeModulusProof(proof);
    expect(Array.from(body.subarray(0, 10))).toEqual([0x4e, 0x56, 0x50, 1, 0x01, 0x00, 0, 0, 0, 2]);
    expect(body.length).toBe(proofByteLength(2048, 2));
    expect(body.length).toBe(10 + 256 * 5);
    expect(Array.from(body.subarray(body.length - 2))).toEqual([2, 3]);
    expect(decodeModulusProof(body)).toEqual(proof);
  });

  it('refuses a query or an answer given as a proof, and a truncated proof', () => {
    wireError(() => decodeModulusProof(encodeQuery(n, values)));
    wireError(() => decodeModulusProof(encodeAnswer(256, values)));
    wireError(() => decodeModulusProof(encodeModulusProof(proof).subarray(0, 10 + 256 * 4)));
    wireError(() => decodeQuery(encodeModulusProof(proof)));
  });

  it('reads the modulus of a query without its values, with the same header checks', () => {
    expect(decodeQueryModulus(encodeQuery(n, values))).toBe(n);
    wireError(() => decodeQueryModulus(encodeQuery(n, values).subarray(0, 300)));
  });
});
