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
  const src = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  const records: string[][] = [];
  const problems: CsvProblem[] = [];
  let record: string[] = [];
  let field = '';
  let i = 0;
  const endField = () => {
    record.push(field);
    field = '';
  };
  const endRecord = () => {
    endField();
    records.push(record);
    record = [];
  };
  while (i < src.length) {
    const ch = src[i]!;
    if (ch === '"' && field === '') {
      // Quoted field: runs to the next quote that is not doubled.
      let j = i + 1;
      let value = '';
      let closed = false;
      while (j < src.length) {
        const c = src[j]!;
        if (c === '"') {
          if (src[j + 1] === '"') {
            value += '"';
            j += 2;
            continue;
          }
          closed = true;
          j++;
          break;
        }
        value += c;
        j++;
      }
      field = value;
      if (!closed) {
        problems.push({ record: records.length + 1, message: 'a quoted field is never closed' });
        i = j;
        break;
      }
      const next = src[j];
      if (next !== undefined && next !== ',' && next !== '\n' && next !== '\r') {
        problems.push({ record: records.length + 1, message: `expected a comma or line break after a closing quote, got "${next}"` });
        // Skip to the next separator so one mistake does not garble the rest of the file.
        while (j < src.length && src[j] !== ',' && src[j] !== '\n' && src[j] !== '\r') j++;
      }
      i = j;
      continue;
    }
    if (ch === ',') {
      endField();
      i++;
    } else if (ch === '\r' || ch === '\n') {
      endRecord();
      i += ch === '\r' && src[i + 1] === '\n' ? 2 : 1;
    } else {
      if (ch === '"') problems.push({ record: records.length + 1, message: 'a quote inside an unquoted field (quote the whole field and double the quote)' });
      field += ch;
      i++;
    }
  }
  // A final record without a line break; a file ending in a line break adds no empty record.
  if (field !== '' || record.length > 0 || (src.length > 0 && src[src.length - 1] === '"')) endRecord();
  return { records, problems };
}
