/**
 * A small CSV reader per RFC 4180: fields separated by commas, records by CRLF or LF (a lone CR
 * too), fields may be quoted with `"` and a quote inside a quoted field is doubled. A leading
 * byte-order mark is dropped and a final line break is optional.
 *
 * It never throws: malformed quoting is reported as a problem with its 1-based record number
 * (the header is record 1, as a spreadsheet numbers rows) and reading goes on.
 */
export interface CsvProblem {
  readonly record: number;
  readonly message: string;
}

export interface CsvResult {
  readonly records: string[][];
  readonly problems: CsvProblem[];
}

export function readCsv(text: string): CsvResult {
  const problems: CsvProblem[] = [];
  return { records: [...csvRecords(text, problems)], problems };
}

/**
 * The records of a CSV text one at a time, so a large table is never held as an array of
 * arrays: problems are pushed onto `problems` as they are met. Fields are cut out of the text
 * (no character-by-character building), so reading stays linear in the text's length.
 */
export function* csvRecords(text: string, problems: CsvProblem[]): Generator<string[], void, undefined> {
  const src = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  const n = src.length;
  let number = 0;
  let record: string[] = [];
  let i = 0;
  let pendingField = false; // a separator was read, so a (possibly empty) field follows
  while (i < n) {
    let field: string;
    if (src.charCodeAt(i) === 0x22) {
      // Quoted field: runs to the next quote that is not doubled.
      let j = i + 1;
      let value = '';
      let from = j;
      let closed = false;
      while (j < n) {
        const q = src.indexOf('"', j);
        if (q < 0) {
          j = n;
          break;
        }
        if (src.charCodeAt(q + 1) === 0x22) {
          value += src.slice(from, q + 1);
          j = q + 2;
          from = j;
          continue;
        }
        value += src.slice(from, q);
        closed = true;
        j = q + 1;
        break;
      }
      if (!closed) {
        value += src.slice(from, n);
        problems.push({ record: number + 1, message: 'a quoted field is never closed' });
        record.push(value);
        yield record;
        return;
      }
      field = value;
      const next = src[j];
      if (next !== undefined && next !== ',' && next !== '\n' && next !== '\r') {
        problems.push({ record: number + 1, message: `expected a comma or line break after a closing quote, got "${next}"` });
        // Skip to the next separator so one mistake does not garble the rest of the file.
        while (j < n && src[j] !== ',' && src[j] !== '\n' && src[j] !== '\r') j++;
      }
      i = j;
    } else {
      let j = i;
      for (; j < n; j++) {
        const c = src.charCodeAt(j);
        if (c === 0x2c || c === 0x0a || c === 0x0d) break;
        if (c === 0x22) problems.push({ record: number + 1, message: 'a quote inside an unquoted field (quote the whole field and double the quote)' });
      }
      field = src.slice(i, j);
      i = j;
    }
    record.push(field);
    pendingField = false;
    if (i >= n) break;
    const c = src.charCodeAt(i);
    if (c === 0x2c) {
      i++;
      pendingField = true;
      continue;
    }
    // A line break ends the record (CRLF, LF or a lone CR).
    i += c === 0x0d && src.charCodeAt(i + 1) === 0x0a ? 2 : 1;
    number++;
    yield record;
    record = [];
  }
  // A final record without a line break; a trailing comma leaves one empty field.
  if (pendingField) record.push('');
  if (record.length > 0) {
    number++;
    yield record;
  }
}
