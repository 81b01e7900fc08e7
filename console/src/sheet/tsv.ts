/**
 * Tab-separated text as spreadsheet programs put it on the clipboard: cells split by tabs, rows
 * by CRLF or LF, and a cell holding a tab, line break or quote wrapped in double quotes with
 * inner quotes doubled (the IANA text/tab-separated-values registration allows no quoting; the
 * quoting is common practice of spreadsheet programs). A final line break adds no row.
 */
export function parseTsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let cell = '';
  let i = 0;
  const src = text.replace(/\r\n?/g, '\n');
  while (i < src.length) {
    const ch = src[i]!;
    if (ch === '"' && cell === '') {
      const close = closingQuote(src, i + 1);
      if (close !== -1) {
        cell = src.slice(i + 1, close).replace(/""/g, '"');
        i = close + 1;
        continue;
      }
    }
    if (ch === '\t') {
      row.push(cell);
      cell = '';
    } else if (ch === '\n') {
      row.push(cell);
      rows.push(row);
      row = [];
      cell = '';
    } else {
      cell += ch;
    }
    i++;
  }
  if (cell !== '' || row.length > 0) {
    row.push(cell);
    rows.push(row);
  }
  return rows;
}

/** Index of the quote closing a quoted cell opened just before `from`, if the cell ends right after it. */
function closingQuote(src: string, from: number): number {
  let j = from;
  while (j < src.length) {
    if (src[j] === '"') {
      if (src[j + 1] === '"') {
        j += 2;
        continue;
      }
      const next = src[j + 1];
      return next === undefined || next === '\t' || next === '\n' ? j : -1;
    }
    j++;
  }
  return -1;
}

/** The reverse, for copying a selection to the clipboard. */
export function formatTsv(rows: readonly (readonly string[])[]): string {
  return rows.map((r) => r.map((c) => (/[\t\n\r"]/.test(c) ? `"${c.replace(/"/g, '""')}"` : c)).join('\t')).join('\n');
}
