import { describe, expect, it } from 'vitest';
import { ERROR_CODES } from '../../api/http/error-codes.ts';
import { OriginsSchema } from '../../api/auth/browser-keys.ts';
import { originProblem, readOriginLines } from '../../console/src/keys/origin-lines.ts';
import { refusalReason, WORDED_REFUSALS } from '../../console/src/keys/refusal-reasons.ts';

// The console's own check of typed origins must accept exactly what the server accepts
// (api/auth/browser-keys.ts OriginsSchema), and say how to fix what it refuses.
// Origin serialization per RFC 6454 section 6.2 and the WHATWG URL Standard "ASCII serialization
// of an origin" (from memory): scheme "://" host, then ":" port only when it is not the scheme's default.
const EXACT = ['https://harrow-vale.example', 'http://127.0.0.1:5173', 'http://localhost:8080', 'https://[::1]:8443', 'https://xn--bcher-kva.example'];
const NOT_EXACT: Array<[string, RegExp]> = [
  ['https://harrow-vale.example/', /ends with a slash; write https:\/\/harrow-vale\.example$/],
  ['https://harrow-vale.example/find', /has a path \(\/find\)/],
  ['https://harrow-vale.example?x=1', /query or fragment/],
  ['https://harrow-vale.example#top', /query or fragment/],
  ['https://ann@harrow-vale.example', /user name or password/],
  // RFC 6454 section 4: the host is lower-cased and the default port dropped when the origin is computed.
  ['https://Harrow-Vale.example', /not written as browsers send it; write https:\/\/harrow-vale\.example$/],
  ['https://harrow-vale.example:443', /not written as browsers send it; write https:\/\/harrow-vale\.example$/],
  ['ftp://harrow-vale.example', /not http:\/\/ or https:\/\//],
  ['harrow-vale.example', /not a web address/],
  ['self', /not a web address/],
];

describe('typed origins, checked in the page', () => {
  it('accepts exact origins and refuses the rest, as the server does', () => {
    for (const origin of EXACT) {
      expect(originProblem(origin), origin).toBeNull();
      expect(OriginsSchema.safeParse([origin]).success, origin).toBe(true);
    }
    for (const [text, message] of NOT_EXACT) {
      expect(originProblem(text), text).toMatch(message);
      expect(OriginsSchema.safeParse([text]).success, text).toBe(false);
    }
  });

  it('names the first bad line (counting blank lines), trims, skips blanks and keeps repeats once', () => {
    expect(readOriginLines(' https://a.example \n\nhttps://a.example\r\nhttp://127.0.0.1:5173\n', { field: 'Origins', allowEmpty: false })).toEqual({
      ok: true,
      origins: ['https://a.example', 'http://127.0.0.1:5173'],
    });
    const bad = readOriginLines('https://a.example\n\nhttps://b.example/\nhttps://c.example/x', { field: 'Origins', allowEmpty: false });
    expect(bad).toEqual({ ok: false, problem: 'Origins, line 3: "https://b.example/" ends with a slash; write https://b.example' });
  });

  it('needs one origin for a key, none for frame origins, and at most 20', () => {
    expect(readOriginLines(' \n', { field: 'Origins', allowEmpty: false }).ok).toBe(false);
    expect(readOriginLines(' \n', { field: 'Frame origins', allowEmpty: true })).toEqual({ ok: true, origins: [] });
    const many = Array.from({ length: 21 }, (_, i) => `https://site${i}.example`).join('\n');
    expect(readOriginLines(many, { field: 'Origins', allowEmpty: false })).toEqual({ ok: false, problem: 'Origins: at most 20 origins, got 21' });
    expect(OriginsSchema.safeParse(many.split('\n')).success).toBe(false);
  });
});

describe('refusal reasons in words', () => {
  it('words only codes the API has (api/http/error-codes.ts), and shows an unknown code as it is', () => {
    for (const code of WORDED_REFUSALS) expect(Object.keys(ERROR_CODES), code).toContain(code);
    for (const code of ['rate_limited', 'origin_not_allowed', 'origin_missing', 'server_key_in_page', 'quota_exceeded', 'key_scope', 'value_jacobi', 'modulus_unproven']) {
      expect(refusalReason(code), code).not.toBe(code);
    }
    expect(refusalReason('http_418')).toBe('http_418');
  });
});
