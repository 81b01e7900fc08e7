import { InputError } from '../errors/input-error.ts';

/**
 * Decodes an uploaded file as UTF-8 (RFC 3629), refusing any byte sequence that is not well formed
 * instead of replacing it with U+FFFD: a Latin-1 or Windows-1252 file would otherwise be accepted
 * with its accented letters silently lost. A leading byte-order mark is dropped.
 *
 * Throws InputError `encoding` (400, field `file`) naming the line (1-based; a line ends at LF, CRLF
 * or a lone CR, so in a CSV without line breaks inside quotes it is the spreadsheet row) and the
 * 0-based byte offset of the first bad byte, with how to re-save the file.
 */
export function decodeUtf8File(bytes: Uint8Array): string {
  if (!(bytes instanceof Uint8Array)) throw new TypeError(`decodeUtf8File: expected a Uint8Array, got ${typeof bytes}`);
  try {
    return new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    const offset = firstInvalidUtf8Byte(bytes);
    // The decoder refused, so there is a bad byte: this re-check keeps the two in agreement.
    if (offset < 0) throw new Error('decodeUtf8File: the decoder refused bytes the checker accepts');
    const line = lineAt(bytes, offset);
    const hex = bytes[offset]!.toString(16).toUpperCase().padStart(2, '0');
    throw new InputError(
      'encoding',
      'file',
      `file: expected UTF-8 text, got byte 0x${hex} at line ${line} (byte offset ${offset}) that is not valid UTF-8;` +
        ' re-save the file with the UTF-8 encoding (most spreadsheets and text editors offer it when saving) and try again',
      { details: [{ row: line, message: `byte 0x${hex} at byte offset ${offset} is not valid UTF-8` }] },
    );
  }
}

/**
 * The offset of the first byte that starts or breaks an ill-formed sequence, or -1 when all of
 * `bytes` is well-formed UTF-8. The ranges are those of RFC 3629 section 4 (the Unicode Standard's
 * table of well-formed byte sequences, from memory): no overlong forms, no surrogates (U+D800 to
 * U+DFFF), nothing above U+10FFFF.
 */
export function firstInvalidUtf8Byte(bytes: Uint8Array): number {
  let i = 0;
  while (i < bytes.length) {
    const b = bytes[i]!;
    if (b < 0x80) {
      i++;
      continue;
    }
    // The allowed range of the second byte depends on the first; later bytes are 80..BF.
    let length: number;
    let low = 0x80;
    let high = 0xbf;
    if (b >= 0xc2 && b <= 0xdf) length = 2;
    else if (b >= 0xe0 && b <= 0xef) {
      length = 3;
      if (b === 0xe0) low = 0xa0;
      if (b === 0xed) high = 0x9f;
    } else if (b >= 0xf0 && b <= 0xf4) {
      length = 4;
      if (b === 0xf0) low = 0x90;
      if (b === 0xf4) high = 0x8f;
    } else return i;
    for (let k = 1; k < length; k++) {
      const c = bytes[i + k];
      if (c === undefined) return i; // cut short by the end of the file
      const [lo, hi] = k === 1 ? [low, high] : [0x80, 0xbf];
      if (c < lo || c > hi) return i;
    }
    i += length;
  }
  return -1;
}

/** The 1-based line holding byte `offset`: LF, CRLF and a lone CR each end a line. */
function lineAt(bytes: Uint8Array, offset: number): number {
  let line = 1;
  for (let i = 0; i < offset; i++) {
    const b = bytes[i]!;
    if (b === 0x0a || (b === 0x0d && bytes[i + 1] !== 0x0a)) line++;
  }
  return line;
}
