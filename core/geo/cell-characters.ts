/**
 * Characters refused in a site table's cells, because they are invisible or change how the text
 * around them is shown: an id or name holding them can look like another (a spoofed site) or
 * break the lines and logs it is printed in.
 *
 * - C0 controls U+0000 to U+001F and DEL U+007F (ASCII, RFC 20), and the C1 controls U+0080 to
 *   U+009F (ISO/IEC 6429), from memory;
 * - the explicit bidirectional formatting characters of the Unicode Bidirectional Algorithm
 *   (UAX #9, from memory): embeddings and overrides U+202A to U+202E, isolates U+2066 to U+2069,
 *   and the implicit marks U+200E, U+200F and U+061C.
 *
 * Detail cells may keep tab, line feed and carriage return: RFC 4180 allows line breaks inside a
 * quoted field, and a multi-line address or a tab-aligned note is ordinary text. Header cells, ids
 * and names may not: they are single-line labels.
 */

// Built from code points so the source holds no invisible characters itself.
const range = (from: number, to: number) => `\\u${hex(from)}-\\u${hex(to)}`;
const one = (cp: number) => `\\u${hex(cp)}`;
const hex = (cp: number) => cp.toString(16).padStart(4, '0');
const BIDI = [range(0x202a, 0x202e), range(0x2066, 0x2069), one(0x200e), one(0x200f), one(0x061c)].join('');

/** Refused in a header cell, an id or a name: every control and bidirectional character. */
const IN_LABEL = new RegExp(`[${range(0x00, 0x1f)}${range(0x7f, 0x9f)}${BIDI}]`, 'u');
/** Refused in a detail cell: the same, but tab, line feed and carriage return are allowed. */
const IN_DETAIL = new RegExp(`[${range(0x00, 0x08)}${one(0x0b)}${one(0x0c)}${range(0x0e, 0x1f)}${range(0x7f, 0x9f)}${BIDI}]`, 'u');

/**
 * Why `text` is refused, naming the first refused character as U+XXXX and its 1-based position
 * (in code points), or null when it is acceptable. `kind` is 'label' for header cells, ids and
 * names, 'detail' for every other cell.
 */
export function refusedCharacter(text: string, kind: 'label' | 'detail'): string | null {
  const match = (kind === 'label' ? IN_LABEL : IN_DETAIL).exec(text);
  if (!match) return null;
  const cp = match[0].codePointAt(0)!;
  const position = [...text.slice(0, match.index)].length + 1;
  const what = cp <= 0x9f ? 'a control character' : 'a bidirectional formatting character';
  return `contains U+${cp.toString(16).toUpperCase().padStart(4, '0')} (${what}) at character ${position}; remove it`;
}
