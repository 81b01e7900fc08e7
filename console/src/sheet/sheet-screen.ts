import { ApiFailure } from '../api/client.ts';
import { csvToSheet } from '../io/csv-sheet.ts';
import { importedFileText } from '../io/file-text.ts';
import { geoJsonToSheet, sheetToGeoJson } from '../io/geojson.ts';
import type { ConsoleContext, Screen } from '../ui/context.ts';
import { askText } from '../ui/ask-dialog.ts';
import { datasetPicker } from '../ui/dataset-picker.ts';
import { download, errorText, fmt, h, setStatus } from '../ui/dom.ts';
import { fitHeightToWindow } from '../ui/fit-height.ts';
import { GridView } from './grid-view.ts';
import { checkSheet, sheetCsv, sheetExportCsv, type SheetIssues } from './sheet-issues.ts';
import { SheetModel } from './sheet-model.ts';

/** Problems listed beside the grid; the count covers them all. */
const LISTED_PROBLEMS = 300;

/** The site table editor: grid, toolbar, problems list, open, import, export and save. */
export function sheetScreen(ctx: ConsoleContext): Screen & { model: SheetModel; grid: GridView; openVersion(slug: string, version: number): Promise<void> } {
  const model = new SheetModel();
  const status = h('div', { class: 'status', role: 'status' });
  const say = (text: string, tone: 'plain' | 'good' | 'bad' = 'plain') => setStatus(status, text, tone);
  const cellMessage = h('div', { class: 'cell-message', id: 'cell-message', 'aria-live': 'polite' });
  const grid = new GridView(model, { say, onActive: () => showActive() });
  grid.scroller.setAttribute('aria-describedby', 'cell-message');
  let issues: SheetIssues = checkSheet(model.columns, model.rows);
  let loadedFrom = 'a new, empty table';
  // Save is for changes: off until the table differs from what was opened or last saved.
  let changed = false;
  // Set while a version is being opened or just saved, so those model changes are not edits.
  let settling = false;
  let shownOnce = false;

  const picker = datasetPicker(ctx, 'sheet-dataset', () => undefined);
  const openButton = h('button', { type: 'button', onclick: () => void openActive() }, 'Open active version');
  const newDataset = h('button', { type: 'button', onclick: () => createDataset() }, 'New dataset…');
  const fileInput = h('input', { type: 'file', id: 'sheet-import', accept: '.csv,.tsv,.txt,.geojson,.json,text/csv,application/geo+json' }) as HTMLInputElement;
  fileInput.addEventListener('change', () => void importFile());
  const importLabel = h('label', { for: 'sheet-import' }, 'Import CSV or GeoJSON ', fileInput);
  const filterColumn = h('select', { id: 'filter-column' }) as HTMLSelectElement;
  const filterText = h('input', { id: 'filter-text', type: 'search', placeholder: 'text to find', size: 14 }) as HTMLInputElement;
  filterText.addEventListener('input', () => applyFilter());
  filterColumn.addEventListener('change', () => applyFilter());
  const onlyProblems = h('input', { id: 'filter-problems', type: 'checkbox' }) as HTMLInputElement;
  onlyProblems.addEventListener('change', () => applyFilter());
  const saveButton = h('button', { type: 'button', class: 'primary', onclick: () => void save() }, 'Save as draft version');
  const undoButton = h('button', { type: 'button', onclick: () => say(model.undo() ? 'Undone' : 'Nothing to undo') }, 'Undo');
  const redoButton = h('button', { type: 'button', onclick: () => say(model.redo() ? 'Redone' : 'Nothing to redo') }, 'Redo');
  const problemsList = h('ol', {});
  const problemsTitle = h('h2', { id: 'problems-title' }, 'Problems');
  const summary = h('p', { class: 'grid-note' });

  const toolbar1 = h(
    'div',
    { class: 'toolbar', role: 'toolbar', 'aria-label': 'Dataset and files' },
    picker.element,
    openButton,
    newDataset,
    h('span', { class: 'sep' }),
    importLabel,
    h('button', { type: 'button', onclick: () => exportCsv() }, 'Export CSV'),
    h('button', { type: 'button', onclick: () => exportGeoJson() }, 'Export GeoJSON'),
    h('span', { class: 'sep' }),
    saveButton,
  );
  const toolbar2 = h(
    'div',
    { class: 'toolbar', role: 'toolbar', 'aria-label': 'Rows, columns, order and filter' },
    undoButton,
    redoButton,
    h('span', { class: 'sep' }),
    h('button', { type: 'button', onclick: () => addRow() }, 'Add row'),
    h('button', { type: 'button', onclick: () => deleteRows() }, 'Delete rows'),
    h('button', { type: 'button', onclick: () => addColumn() }, 'Add column'),
    h('button', { type: 'button', onclick: () => deleteColumn() }, 'Delete column'),
    h('button', { type: 'button', onclick: () => grid.fillDown(), title: 'Ctrl+D' }, 'Fill down'),
    h('span', { class: 'sep' }),
    h('button', { type: 'button', onclick: () => sortActive('ascending') }, 'Sort A→Z'),
    h('button', { type: 'button', onclick: () => sortActive('descending') }, 'Sort Z→A'),
    h('span', { class: 'sep' }),
    h('label', { for: 'filter-column' }, 'Filter ', filterColumn),
    h('label', { for: 'filter-text', class: 'sr-only' }, 'Filter text'),
    filterText,
    h('label', { for: 'filter-problems' }, onlyProblems, ' only rows with problems'),
  );
  const element = h(
    'section',
    { 'aria-label': 'Site table' },
    toolbar1,
    toolbar2,
    status,
    h(
      'div',
      { class: 'columns' },
      h('div', {}, grid.element, cellMessage, summary),
      h('div', { class: 'panel problems', 'aria-labelledby': 'problems-title' }, problemsTitle, problemsList),
    ),
  );

  // The grid and the problems list end above the window's bottom, leaving room for the notes under the grid.
  const fitGrid = fitHeightToWindow(grid.scroller, 72);
  const fitProblems = fitHeightToWindow(problemsList, 40, 120, 'maxHeight');

  let checkTimer = 0;
  model.onChange(() => {
    if (!settling) changed = true;
    clearTimeout(checkTimer);
    // Checking 100,000 rows takes a few hundred ms: wait until typing pauses.
    checkTimer = window.setTimeout(() => recheck(), model.rows.length > 20_000 ? 250 : 0);
    refreshFilterColumns();
    if (filterText.value || onlyProblems.checked) applyFilter();
  });

  function recheck(): void {
    issues = checkSheet(model.columns, model.rows);
    grid.setIssues(issues);
    const count = issues.list.length;
    problemsTitle.textContent = count === 0 ? 'No problems' : `${fmt.format(count)} problem${count === 1 ? '' : 's'} to fix before saving`;
    problemsList.replaceChildren(
      ...issues.list.slice(0, LISTED_PROBLEMS).map((issue) => {
        const where = `${issue.row >= 0 ? `Row ${issue.row + 1}` : 'Header'}${issue.col >= 0 ? `, ${model.columns[issue.col]}` : ''}`;
        return h('li', {}, h('button', { type: 'button', onclick: () => jumpTo(issue.row, issue.col) }, `${where}: ${issue.message}`));
      }),
    );
    if (count > LISTED_PROBLEMS) problemsList.append(h('li', {}, `… and ${fmt.format(count - LISTED_PROBLEMS)} more`));
    saveButton.disabled = count > 0 || !changed;
    saveButton.title = count > 0 ? 'Fix the marked cells first' : !changed ? `Nothing to save: no change since ${loadedFrom} was opened or saved` : '';
    summary.textContent = `${fmt.format(model.rows.length)} rows × ${model.columns.length} columns · from ${loadedFrom}` +
      (issues.blankRows > 0 ? ` · ${issues.blankRows} empty row${issues.blankRows === 1 ? '' : 's'} left out when saving` : '');
    showActive();
  }

  function showActive(): void {
    const message = grid.activeMessage();
    cellMessage.textContent = message ? `Row ${grid.modelRow(grid.active.r) + 1}, ${model.columns[grid.active.c]}: ${message}` : '';
  }

  function jumpTo(row: number, col: number): void {
    if (grid.filtered) {
      filterText.value = '';
      onlyProblems.checked = false;
      applyFilter();
    }
    grid.moveTo({ r: Math.max(0, row), c: Math.max(0, col) });
    grid.focus();
  }

  function refreshFilterColumns(): void {
    const current = filterColumn.value;
    const options = [h('option', { value: '' }, 'any column'), ...model.columns.map((c, i) => h('option', { value: String(i) }, c))];
    filterColumn.replaceChildren(...options);
    filterColumn.value = Number(current) < model.columns.length ? current : '';
  }

  function applyFilter(): void {
    const text = filterText.value;
    if (!text.trim() && !onlyProblems.checked) return grid.setView(null);
    const col = filterColumn.value === '' ? null : Number(filterColumn.value);
    let rows = model.matching(col, text);
    if (onlyProblems.checked) rows = rows.filter((r) => issues.rows.has(r));
    grid.setView(rows);
    say(`Showing ${fmt.format(rows.length)} of ${fmt.format(model.rows.length)} rows`);
  }

  function addRow(): void {
    const rows = grid.selectedModelRows();
    const at = rows.length > 0 ? Math.max(...rows) + 1 : model.rows.length;
    model.insertRows(at);
    if (!grid.filtered) grid.moveTo({ r: at, c: 0 });
    say(`Added row ${at + 1}`);
  }

  function deleteRows(): void {
    const rows = grid.selectedModelRows();
    if (rows.length === 0) return say('Select the rows to delete first', 'bad');
    model.deleteRows(rows);
    say(`Deleted ${rows.length} row${rows.length === 1 ? '' : 's'}; Ctrl+Z brings ${rows.length === 1 ? 'it' : 'them'} back`);
  }

  function addColumn(): void {
    void askText({
      title: 'Add a column',
      label: 'Name of the new column',
      hint: 'A detail apps may show, such as phone or hours. It goes right of the selected cells.',
      submitLabel: 'Add column',
      maxLength: 64,
      act: async (name) => {
        try {
          model.insertColumn(grid.selection().c1 + 1, name);
        } catch (err) {
          return errorText(err).replace(/^insertColumn: /, '');
        }
        say(`Added column ${name}`);
        return null;
      },
    });
  }

  function deleteColumn(): void {
    const { c0, c1 } = grid.selection();
    if (c0 !== c1) return say('Select cells in one column to delete it', 'bad');
    const name = model.columns[c0];
    model.deleteColumn(c0);
    say(`Deleted column ${name}; Ctrl+Z brings it back`);
  }

  function sortActive(direction: 'ascending' | 'descending'): void {
    const col = grid.active.c;
    model.sortBy(col, direction);
    grid.sortState = { col, direction };
    say(`Sorted by ${model.columns[col]} (${direction}); Ctrl+Z undoes it`);
  }

  async function openActive(): Promise<void> {
    const slug = picker.select.value;
    if (!slug) return say('Choose a dataset first', 'bad');
    try {
      const { activeVersion, versions } = await ctx.api.versions(slug);
      const version = activeVersion ?? versions[0]?.version;
      if (!version) return say(`${slug} has no versions yet: paste or import sites, then save`, 'bad');
      await openVersion(slug, version);
    } catch (err) {
      say(errorText(err), 'bad');
    }
  }

  /** Opens the chosen dataset's active version, if it has one; an empty dataset stays an empty table without a complaint. */
  async function openActiveQuietly(): Promise<void> {
    const slug = picker.select.value;
    try {
      const { activeVersion } = await ctx.api.versions(slug);
      const untouched = () => !changed && model.rows.length === 0 && picker.select.value === slug;
      if (activeVersion !== null && untouched()) await openVersion(slug, activeVersion, untouched);
      else say(`${slug} has no active version: paste, type or import sites, then save`);
    } catch (err) {
      say(errorText(err), 'bad');
    }
  }

  /** `stillWanted`: checked once the table has arrived (the person may have moved on meanwhile). */
  async function openVersion(slug: string, version: number, stillWanted: () => boolean = () => true): Promise<void> {
    say(`Opening ${slug} version ${version}…`);
    const sheet = csvToSheet(await ctx.api.table(slug, version));
    if (!stillWanted()) return;
    settling = true;
    model.replace(`open ${slug} v${version}`, sheet.columns, sheet.rows);
    settling = false;
    changed = false;
    loadedFrom = `${slug} version ${version}`;
    grid.sortState = null;
    grid.moveTo({ r: 0, c: 0 });
    recheck();
    say(`Opened ${slug} version ${version}: ${fmt.format(sheet.rows.length)} rows`, 'good');
  }

  function createDataset(): void {
    void askText({
      title: 'New dataset',
      label: 'Short name of the dataset',
      hint: 'Lower-case letters, digits and dashes; apps ask for the dataset by this name.',
      submitLabel: 'Create dataset',
      maxLength: 63,
      act: async (slug) => {
        try {
          await ctx.api.createDataset(slug);
        } catch (err) {
          return errorText(err);
        }
        ctx.setDataset(slug);
        await picker.refresh().catch(() => null);
        settling = true;
        model.replace('new dataset', ['id', 'name', 'lat', 'lon'], []);
        settling = false;
        changed = false;
        loadedFrom = `a new table for ${slug}`;
        recheck();
        say(`Created dataset ${slug}: paste or import its sites, then save`, 'good');
        return null;
      },
    });
  }

  async function importFile(): Promise<void> {
    const file = fileInput.files?.[0];
    if (!file) return;
    try {
      const text = await importedFileText(file);
      const isJson = /\.(geo)?json$/i.test(file.name) || text.trimStart().startsWith('{');
      const tab = /\.tsv$/i.test(file.name);
      const sheet: { columns: string[]; rows: string[][]; problems?: string[] } = isJson ? geoJsonToSheet(text) : tab ? tsvSheet(text) : csvToSheet(text);
      model.replace(`import ${file.name}`, sheet.columns, sheet.rows);
      loadedFrom = file.name;
      grid.sortState = null;
      grid.moveTo({ r: 0, c: 0 });
      recheck();
      const notes = sheet.problems && sheet.problems.length > 0 ? ` (reader notes: ${sheet.problems.slice(0, 3).join('; ')})` : '';
      say(`Imported ${fmt.format(sheet.rows.length)} rows from ${file.name}${notes}`, 'good');
    } catch (err) {
      say(`Import of ${file.name} refused: ${errorText(err)}`, 'bad');
    } finally {
      fileInput.value = '';
    }
  }

  function exportCsv(): void {
    download(`${picker.select.value || 'sites'}.csv`, sheetExportCsv(model.columns, model.rows), 'text/csv');
    say('Exported the table as CSV');
  }

  function exportGeoJson(): void {
    const { text, skipped } = sheetToGeoJson(model.columns, model.rows);
    download(`${picker.select.value || 'sites'}.geojson`, text, 'application/geo+json');
    say(`Exported GeoJSON${skipped > 0 ? `; ${skipped} rows without valid coordinates left out` : ''}`);
  }

  async function save(): Promise<void> {
    const slug = picker.select.value;
    if (!slug) return say('Choose or create a dataset first', 'bad');
    recheck();
    if (issues.list.length > 0) return say(`Fix the ${issues.list.length} marked problem(s) first`, 'bad');
    saveButton.disabled = true;
    try {
      const saved = await ctx.api.upload(slug, sheetCsv(model.columns, model.rows));
      loadedFrom = `${slug} version ${saved.version}`;
      changed = false;
      say(`Saved as version ${saved.version} of ${slug} (draft, ${fmt.format(saved.siteCount)} sites). Build and publish it under Versions.`, 'good');
    } catch (err) {
      const extra = err instanceof ApiFailure && err.details.length > 0 ? ` (${err.details.slice(0, 3).map((d) => `row ${d.row}: ${d.message}`).join('; ')})` : '';
      say(`Not saved: ${errorText(err)}${extra}`, 'bad');
    } finally {
      recheck();
    }
  }

  refreshFilterColumns();
  recheck();
  return {
    element,
    model,
    grid,
    openVersion: (slug, version) => openVersion(slug, version).catch((err) => say(errorText(err), 'bad')),
    show() {
      const fit = () => {
        fitGrid();
        fitProblems();
      };
      fit();
      // Again once the dataset list is in: a long dataset name can wrap the toolbar to another line.
      // The first time, an untouched empty table gives way to the chosen dataset's active version.
      const first = !shownOnce;
      shownOnce = true;
      void picker.refresh().then(
        () => {
          fit();
          if (first && !changed && model.rows.length === 0 && picker.select.value) void openActiveQuietly();
        },
        (err) => say(errorText(err), 'bad'),
      );
      grid.render();
    },
  };
}

function tsvSheet(text: string) {
  const rows = text.replace(/\r\n?/g, '\n').split('\n').filter((l) => l.trim() !== '').map((l) => l.split('\t'));
  const [header, ...rest] = rows;
  return { columns: (header ?? []).map((x) => x.trim()), rows: rest, problems: [] as string[] };
}
