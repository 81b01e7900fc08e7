/**
 * Differences between two site tables, matched by site id (the `id` column, as the server reads
 * it: case-insensitive header, trimmed value). Columns are matched by name, so reordering columns
 * changes nothing; a renamed column shows as one removed and one added. Pure, for tests.
 */
export interface TableData {
  columns: readonly string[];
  rows: readonly (readonly string[])[];
}

export interface CellChange {
  column: string;
  before: string;
  after: string;
}

export interface TableDiff {
  columnsAdded: string[];
  columnsRemoved: string[];
  added: Array<{ id: string; cells: Record<string, string> }>;
  removed: Array<{ id: string; cells: Record<string, string> }>;
  changed: Array<{ id: string; cells: CellChange[] }>;
  unchanged: number;
}

function byId(table: TableData): Map<string, Record<string, string>> {
  const idAt = table.columns.findIndex((c) => c.trim().toLowerCase() === 'id');
  if (idAt < 0) throw new RangeError('diffTables: expected an "id" column in both tables');
  const out = new Map<string, Record<string, string>>();
  for (const row of table.rows) {
    const id = (row[idAt] ?? '').trim();
    if (id === '' || out.has(id)) continue; // a stored version never has these; drafts may
    const cells: Record<string, string> = {};
    table.columns.forEach((c, i) => (cells[c.trim()] = row[i] ?? ''));
    out.set(id, cells);
  }
  return out;
}

export function diffTables(before: TableData, after: TableData): TableDiff {
  const a = byId(before);
  const b = byId(after);
  const colsA = before.columns.map((c) => c.trim());
  const colsB = after.columns.map((c) => c.trim());
  const columnsAdded = colsB.filter((c) => !colsA.includes(c));
  const columnsRemoved = colsA.filter((c) => !colsB.includes(c));
  const shared = colsB.filter((c) => colsA.includes(c));
  const diff: TableDiff = { columnsAdded, columnsRemoved, added: [], removed: [], changed: [], unchanged: 0 };
  for (const [id, cells] of b) {
    const old = a.get(id);
    if (!old) {
      diff.added.push({ id, cells });
      continue;
    }
    const changes: CellChange[] = [];
    for (const c of shared) if ((old[c] ?? '') !== (cells[c] ?? '')) changes.push({ column: c, before: old[c] ?? '', after: cells[c] ?? '' });
    // Values in added or removed columns count as changes too, so no cell is silently dropped.
    for (const c of columnsAdded) if ((cells[c] ?? '') !== '') changes.push({ column: c, before: '', after: cells[c]! });
    for (const c of columnsRemoved) if ((old[c] ?? '') !== '') changes.push({ column: c, before: old[c]!, after: '' });
    if (changes.length > 0) diff.changed.push({ id, cells: changes });
    else diff.unchanged++;
  }
  for (const [id, cells] of a) if (!b.has(id)) diff.removed.push({ id, cells });
  return diff;
}
