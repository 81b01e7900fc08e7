import { Buffer } from 'node:buffer';
import { describe, expect, it } from 'vitest';
import { seededRandom } from '../../../scripts/demo/seeded-random.ts';
import { InputError } from '../../../core/errors/input-error.ts';
import { decodeUtf8File, firstInvalidUtf8Byte } from '../../../core/text/utf8-file.ts';

const bytes = (...b: number[]) => new Uint8Array(b);
const ascii = (s: string) => [...s].map((c) => c.charCodeAt(0));

function refusal(input: Uint8Array): InputError {
  try {
    decodeUtf8File(input);
  } catch (e) {
    if (e instanceof InputError) return e;
    throw e;
  }
  throw new Error('expected decodeUtf8File to refuse');
}

// A seeded generator (mulberry32), so a failing case can be replayed.
const seeded = seededRandom;

describe('decodeUtf8File accepts well-formed UTF-8 (RFC 3629 section 7 examples, from memory)', () => {
  it('decodes the RFC examples, dropping a leading byte-order mark', () => {
    expect(decodeUtf8File(bytes(0x41, 0xe2, 0x89, 0xa2, 0xce, 0x91, 0x2e))).toBe('A\u2262\u0391.');
    expect(decodeUtf8File(bytes(0xed, 0x95, 0x9c, 0xea, 0xb5, 0xad, 0xec, 0x96, 0xb4))).toBe('\ud55c\uad6d\uc5b4');
    expect(decodeUtf8File(bytes(0xe6, 0x97, 0xa5, 0xe6, 0x9c, 0xac, 0xe8, 0xaa, 0x9e))).toBe('\u65e5\u672c\u8a9e');
    expect(decodeUtf8File(bytes(0xef, 0xbb, 0xbf, 0xf0, 0xa3, 0x8e, 0xb4))).toBe('\u{233b4}');
  });
});

describe('decodeUtf8File refuses what is not UTF-8, naming line and byte offset', () => {
  it('refuses a Latin-1 file (é is the single byte 0xE9 in ISO 8859-1) with line 3 and its offset', () => {
    // "id,lat,lon\n" (11 bytes) "a,1,2\n" (6 bytes) then "Bren" + 0xE9: the bad byte is at offset 21.
    const latin1 = bytes(...ascii('id,lat,lon\na,1,2\nBren'), 0xe9, ...ascii(',3,4\n'));
    const e = refusal(latin1);
    expect({ code: e.code, field: e.field, status: e.status }).toEqual({ code: 'encoding', field: 'file', status: 400 });
    expect(e.message).toContain('line 3');
    expect(e.message).toContain('byte offset 21');
    expect(e.message).toContain('0xE9');
    expect(e.message).toMatch(/re-save the file with the UTF-8 encoding/);
    expect(e.details).toEqual([{ row: 3, message: expect.stringContaining('byte offset 21') }]);
  });

  it('counts CRLF and a lone CR as one line break each', () => {
    expect(refusal(bytes(...ascii('h\r\nx\ry\r\n'), 0xff)).message).toContain('line 4');
  });

  it('finds the bad sequences RFC 3629 forbids (sections 3 and 10, from memory)', () => {
    const cases: Array<[string, Uint8Array, number]> = [
      ['a lone continuation byte', bytes(0x61, 0x80), 1],
      ['an overlong NUL (C0 80, section 10)', bytes(0x61, 0x62, 0xc0, 0x80), 2],
      ['an overlong three-byte form (E0 80 AF)', bytes(0xe0, 0x80, 0xaf), 0],
      ['a surrogate U+D800 (ED A0 80)', bytes(0x61, 0xed, 0xa0, 0x80), 1],
      ['above U+10FFFF (F4 90 80 80)', bytes(0xf4, 0x90, 0x80, 0x80), 0],
      ['F5, never a lead byte', bytes(0xf5, 0x80, 0x80, 0x80), 0],
      ['a sequence cut by the end of the file', bytes(0x61, 0xe2, 0x89), 1],
      ['a lead byte followed by ASCII', bytes(0x61, 0x62, 0x63, 0xc3, 0x41), 3],
    ];
    for (const [what, input, offset] of cases) {
      expect(firstInvalidUtf8Byte(input), what).toBe(offset);
      expect(refusal(input).message, what).toContain(`byte offset ${offset}`);
    }
  });

  it('agrees with Node\'s own UTF-8 decoder on random bytes (seeded)', () => {
    const random = seeded(3629);
    // Bytes drawn mostly from the interesting ranges: ASCII, continuations, lead bytes, invalid leads.
    const pool = [0x41, 0x0a, 0x80, 0x8f, 0x90, 0x9f, 0xa0, 0xbf, 0xc0, 0xc2, 0xdf, 0xe0, 0xed, 0xef, 0xf0, 0xf4, 0xf5, 0xff];
    for (let k = 0; k < 3000; k++) {
      const input = new Uint8Array(Array.from({ length: 1 + Math.floor(random() * 8) }, () => pool[Math.floor(random() * pool.length)]!));
      const valid = Buffer.from(Buffer.from(input).toString('utf8'), 'utf8').equals(Buffer.from(input));
      const offset = firstInvalidUtf8Byte(input);
      expect(offset === -1, Buffer.from(input).toString('hex')).toBe(valid);
      if (offset >= 0) {
        // Everything before the reported byte is valid UTF-8 on its own.
        const before = Buffer.from(input.subarray(0, offset));
        expect(Buffer.from(before.toString('utf8'), 'utf8').equals(before), Buffer.from(input).toString('hex')).toBe(true);
      }
    }
  });
});
