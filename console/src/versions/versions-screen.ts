import { canAdminister } from '../api/client.ts';
import type { BuildOptions, DatasetInfo, VersionInfo } from '../api/nearveil.ts';
import { csvToSheet } from '../io/csv-sheet.ts';
import { confirmAction } from '../ui/ask-dialog.ts';
import type { ConsoleContext, Screen } from '../ui/context.ts';
import { datasetPicker } from '../ui/dataset-picker.ts';
import { errorText, fmt, h, plainTable, setStatus } from '../ui/dom.ts';
import { BUILT_WITH, defaultBuildChoice, kDropWarning, LAYOUT_LABELS, sessionChoiceStore, type BuildChoice } from './build-options.ts';
import { deleteDialog, renameDialog } from './dataset-dialogs.ts';
import { diffTables, type TableDiff } from './table-diff.ts';

/** Rows of a diff drawn at once; the counts cover all of it. */
const SHOWN_DIFF_ROWS = 400;
const POLL_MS = 700;

/** Versions of a dataset: state and author, build with progress, publish, roll back, compare. */
export function versionsScreen(ctx: ConsoleContext, openInSheet: (slug: string, version: number) => void): Screen {
  const status = h('div', { class: 'status', role: 'status' });
  const say = (text: string, tone: 'plain' | 'good' | 'bad' = 'plain') => setStatus(status, text, tone);
  const picker = datasetPicker(ctx, 'versions-dataset', () => void load());
  const tableBody = h('tbody', {});
  const progress = h('progress', { max: 100, value: 0, id: 'build-progress', 'aria-label': 'Build progress' }) as HTMLProgressElement;
  const progressText = h('span', { id: 'build-stage' });
  const progressBox = h('div', { class: 'panel', hidden: true }, h('h2', {}, 'Build'), progress, ' ', progressText);
  const fromSelect = h('select', { id: 'diff-from' }) as HTMLSelectElement;
  const toSelect = h('select', { id: 'diff-to' }) as HTMLSelectElement;
  const diffOut = h('div', { id: 'diff-out' });
  const rollbackTarget = h('select', { id: 'rollback-to' }) as HTMLSelectElement;
  const dialog = h('dialog', { 'aria-labelledby': 'rollback-title' }) as HTMLDialogElement;
  const layoutSelect = h(
    'select',
    { id: 'build-layout' },
    ...(Object.entries(LAYOUT_LABELS) as Array<[BuildChoice['layout'], string]>).map(([value, label]) => h('option', { value }, label)),
  ) as HTMLSelectElement;
  const kInput = h('input', { id: 'build-k', type: 'number', min: 1, max: 8, step: 1, value: 1, 'aria-describedby': 'build-source build-warning' }) as HTMLInputElement;
  // Where the form's values come from (the active version, or a choice made this session), and
  // a warning while k is below what the active version serves.
  const buildSource = h('p', { class: 'grid-note', id: 'build-source' });
  const buildWarning = h('p', { class: 'k-warning', id: 'build-warning', hidden: true });
  const choices = sessionChoiceStore(sessionStorage);
  let versions: VersionInfo[] = [];
  let active: number | null = null;
  let dataset: DatasetInfo | null = null;
  let progressSlug: string | null = null;
  // While a version is building (started here, from the CLI or by another person) the list is
  // read again every POLL_MS, so its row shows the stage and percent and then the result.
  let refresh: ReturnType<typeof setTimeout> | null = null;
  // Editors build; publishing and rolling back are for tenant admins (the server enforces it too).
  const mayPublish = canAdminister(ctx.signed);
  const rename = renameDialog(ctx.api, (d) => void afterRename(d));
  const remove = deleteDialog(ctx.api, (d) => void afterDelete(d.dataset, d.name));
  const renameButton = h('button', { type: 'button', onclick: () => (dataset ? rename.open(dataset) : say('Choose a dataset first', 'bad')) }, 'Rename…');
  // Deleting is for tenant admins (the server enforces it too): editors are not offered it.
  const deleteButton = mayPublish ? h('button', { type: 'button', class: 'danger', onclick: () => (dataset ? remove.open(dataset) : say('Choose a dataset first', 'bad')) }, 'Delete dataset…') : null;
  layoutSelect.addEventListener('change', () => chooseByHand());
  kInput.addEventListener('input', () => chooseByHand());

  const element = h(
    'section',
    { 'aria-label': 'Versions' },
    h('div', { class: 'toolbar' }, picker.element, h('button', { type: 'button', onclick: () => void reload() }, 'Refresh'), renameButton, deleteButton),
    status,
    h(
      'div',
      { class: 'panel' },
      h('h2', {}, 'Build options'),
      h(
        'div',
        { class: 'toolbar' },
        h('label', { for: 'build-layout' }, 'Layout ', layoutSelect),
        h('label', { for: 'build-k' }, 'Nearest sites an app may ask for (k, 1-8) ', kInput),
      ),
      buildSource,
      buildWarning,
      h('p', { class: 'grid-note' }, 'More sites per answer make every query larger; the veiled layout also hides where regions are, at about 1.2-1.3 times the bytes.'),
    ),
    progressBox,
    h(
      'div',
      { class: 'panel' },
      h('h2', {}, 'Versions'),
      h('div', { class: 'table-scroll' }, plainTable('versions-table', ['Version', 'State', 'Sites', 'Matrix', 'Author', 'Saved', 'Built', 'Published', 'Actions'], tableBody)),
    ),
    h(
      'div',
      { class: 'panel', hidden: !mayPublish },
      h('h2', {}, 'Roll back'),
      h(
        'div',
        { class: 'toolbar' },
        h('label', { for: 'rollback-to' }, 'Make this version active again ', rollbackTarget),
        h('button', { type: 'button', class: 'danger', onclick: () => confirmRollback() }, 'Roll back…'),
      ),
    ),
    h(
      'div',
      { class: 'panel' },
      h('h2', {}, 'Compare two versions'),
      h(
        'div',
        { class: 'toolbar' },
        h('label', { for: 'diff-from' }, 'From ', fromSelect),
        h('label', { for: 'diff-to' }, 'to ', toSelect),
        h('button', { type: 'button', onclick: () => void compare() }, 'Compare'),
      ),
      diffOut,
    ),
    dialog,
    rename.element,
    remove.element,
  );

  /**
   * Reads the dataset list again (the picker says which version is active, so it changes with
   * every publish, rollback, rename and delete), then the versions.
   */
  async function reload(announce = true): Promise<void> {
    try {
      await picker.refresh();
    } catch (err) {
      return say(errorText(err), 'bad');
    }
    await load(announce);
  }

  /** Reloads the list; `announce` false keeps the status line of the action that just ran. */
  async function load(announce = true): Promise<void> {
    const slug = ctx.dataset;
    if (refresh !== null) clearTimeout(refresh);
    refresh = null;
    dataset = picker.current();
    // The build box belongs to the dataset whose build it followed.
    if (slug !== progressSlug) progressBox.hidden = true;
    renameButton.disabled = dataset === null;
    if (deleteButton) deleteButton.disabled = dataset === null;
    if (!slug) {
      versions = [];
      active = null;
      tableBody.replaceChildren();
      showChoice(null);
      return say('No dataset yet: create one under Site table');
    }
    try {
      const listed = await ctx.api.versions(slug);
      if (slug !== ctx.dataset) return;
      versions = listed.versions;
      active = listed.activeVersion;
      renderTable(slug);
      showChoice(slug);
      if (versions.some((v) => v.state === 'building')) refresh = setTimeout(() => void (element.isConnected ? load(false) : undefined), POLL_MS);
      const options = () => versions.map((v) => h('option', { value: String(v.version) }, `v${v.version} · ${v.state}`));
      fromSelect.replaceChildren(...options());
      toSelect.replaceChildren(...options());
      if (versions.length >= 2) {
        fromSelect.value = String(versions[1]!.version);
        toSelect.value = String(versions[0]!.version);
      }
      const published = versions.filter((v) => v.publishedAt !== null && v.version !== active && (v.state === 'ready' || v.state === 'active'));
      rollbackTarget.replaceChildren(...published.map((v) => h('option', { value: String(v.version) }, `v${v.version} (published ${day(v.publishedAt)})`)));
      if (published.length === 0) rollbackTarget.append(h('option', { value: '' }, 'no earlier published version'));
      if (announce) say(`${slug}: ${versions.length} version${versions.length === 1 ? '' : 's'}${active ? `, v${active} active` : ', none active yet'}`);
    } catch (err) {
      say(errorText(err), 'bad');
    }
  }

  function renderTable(slug: string): void {
    tableBody.replaceChildren(
      ...versions.map((v) => {
        const actions = h('td', {});
        if (v.state === 'draft' || v.state === 'failed' || v.state === 'retired') actions.append(h('button', { type: 'button', onclick: () => void build(slug, v.version) }, `Build v${v.version}`), ' ');
        if (v.state === 'ready' && mayPublish) actions.append(h('button', { type: 'button', class: 'primary', onclick: () => void publish(slug, v.version) }, `Publish v${v.version}`), ' ');
        actions.append(h('button', { type: 'button', onclick: () => openInSheet(slug, v.version) }, 'Open in table'));
        return h(
          'tr',
          { 'data-version': v.version },
          h('td', {}, `v${v.version}`),
          h(
            'td',
            {},
            h('span', { class: `state ${v.state}`, title: v.error ?? null }, v.state),
            v.state === 'building' && v.progress ? buildingProgress(v.version, v.progress) : '',
            v.error && v.state !== 'building' ? ` ${v.error}` : '',
            v.state === 'ready' && v.servedUntil ? ` (answers apps in flight until ${when(v.servedUntil)})` : '',
          ),
          h('td', { class: 'num' }, fmt.format(v.siteCount)),
          h('td', { class: 'matrix', title: v.layoutReason ?? null }, v.matrix ? `${fmt.format(v.matrix.rows)} × ${fmt.format(v.matrix.columns)} · ${v.layout ?? '?'} · k = ${v.maxK ?? 1}` : '—'),
          h('td', { class: 'author' }, v.author ?? 'not recorded'),
          h('td', {}, when(v.createdAt)),
          h('td', {}, when(v.builtAt)),
          h('td', {}, when(v.publishedAt)),
          actions,
        );
      }),
    );
  }

  const activeRow = () => versions.find((v) => v.version === active);

  /** Puts the session's choice for this dataset in the form, else the active version's settings. */
  function showChoice(slug: string | null): void {
    const saved = slug === null ? null : choices.get(slug);
    const current = activeRow();
    setForm(saved ?? defaultBuildChoice(current));
    buildSource.textContent = saved
      ? `Your choice for ${slug} in this session${current?.maxK ? `; v${current.version}, the active version, was built ${current.layout ? `${BUILT_WITH[current.layout]} ` : ''}for k = ${current.maxK}` : ''}.`
      : current?.maxK
        ? `As v${current.version}, the active version, was built: ${LAYOUT_LABELS[defaultBuildChoice(current).layout]}, k = ${current.maxK}.`
        : 'No active version yet: the cheapest layout for the nearest site (k = 1).';
    showWarning();
  }

  function setForm(choice: BuildChoice): void {
    layoutSelect.value = choice.layout;
    kInput.value = String(choice.maxK);
    veiledLimitsK();
  }

  /** The veiled layout serves the nearest site only: k is 1 there, and the field says so. */
  function veiledLimitsK(): void {
    const veiled = layoutSelect.value === 'veiled';
    if (veiled) kInput.value = '1';
    kInput.disabled = veiled;
  }

  function chooseByHand(): void {
    veiledLimitsK();
    const k = Number(kInput.value);
    if (ctx.dataset && Number.isInteger(k) && k >= 1 && k <= 8) {
      choices.set(ctx.dataset, { layout: layoutSelect.value as BuildChoice['layout'], maxK: k });
      buildSource.textContent = `Your choice for ${ctx.dataset} in this session.`;
    }
    showWarning();
  }

  function showWarning(): void {
    const warning = kDropWarning(Number(kInput.value), activeRow());
    buildWarning.textContent = warning ?? '';
    buildWarning.hidden = warning === null;
  }

  async function build(slug: string, version: number): Promise<void> {
    const maxK = Number(kInput.value);
    if (!Number.isInteger(maxK) || maxK < 1 || maxK > 8) return say(`k: expected a whole number from 1 to 8, got "${kInput.value}"`, 'bad');
    const warning = kDropWarning(maxK, activeRow());
    if (warning !== null) {
      const go = await confirmAction({ title: `Build v${version} for k = ${maxK}?`, message: warning, confirmLabel: `Build for k = ${maxK} anyway`, danger: true });
      if (!go) return say(`Not built: v${version} waits for a k of ${activeRow()?.maxK} or more, or your confirmation`);
    }
    progressBox.hidden = false;
    progressSlug = slug;
    progress.value = 0;
    progressText.textContent = `v${version}: queued`;
    say(`Building ${slug} v${version}…`);
    try {
      const started = performance.now();
      await ctx.api.build(slug, version, { layout: layoutSelect.value as BuildOptions['layout'], maxK });
      // The build runs on the server's queue; follow the version until it settles.
      const final = await follow(slug, version);
      progress.value = 100;
      const seconds = ((performance.now() - started) / 1000).toFixed(1);
      if (final.state === 'failed') throw new Error(final.error ?? 'the build failed');
      progressText.textContent = `v${version} built in ${seconds} s: ready to publish`;
      say(`Built ${slug} v${version} (${seconds} s). Publish it to make it the active version apps get.`, 'good');
    } catch (err) {
      progressText.textContent = `v${version}: build failed`;
      say(`Build of v${version} failed: ${errorText(err)}`, 'bad');
    }
    await reload(false);
  }

  async function follow(slug: string, version: number): Promise<VersionInfo> {
    let misses = 0;
    for (;;) {
      await new Promise((r) => setTimeout(r, POLL_MS));
      let v: VersionInfo;
      try {
        v = await ctx.api.version(slug, version);
        misses = 0;
      } catch (err) {
        // A poll lost while the server is busy is not a failed build: give it a minute.
        if (++misses * POLL_MS < 60_000) continue;
        throw err;
      }
      if (v.state !== 'building') return v;
      if (v.progress) {
        progress.value = v.progress.percent;
        progressText.textContent = `v${version}: ${v.progress.stage} · ${Math.round(v.progress.percent)}%`;
      }
    }
  }

  async function publish(slug: string, version: number): Promise<void> {
    const target = versions.find((v) => v.version === version);
    const warning = kDropWarning(target?.maxK ?? 1, activeRow());
    if (warning !== null) {
      const go = await confirmAction({ title: `Publish v${version}, built for k = ${target?.maxK ?? 1}?`, message: warning, confirmLabel: `Publish v${version} anyway`, danger: true });
      if (!go) return say(`Not published: v${active} stays active`);
    }
    try {
      const result = await ctx.api.publish(slug, version);
      say(`v${result.activeVersion} of ${slug} is active${result.previousVersion ? ` (was v${result.previousVersion})` : ''}`, 'good');
    } catch (err) {
      say(`Publish refused: ${errorText(err)}`, 'bad');
    }
    await reload(false);
  }

  function confirmRollback(): void {
    const slug = ctx.dataset;
    const to = Number(rollbackTarget.value);
    if (!slug || !to) return say('There is no earlier published version to roll back to', 'bad');
    const question = `Roll back ${slug} from v${active ?? '?'} (active now) to v${to}?`;
    const kWarning = kDropWarning(versions.find((v) => v.version === to)?.maxK ?? 1, activeRow());
    dialog.replaceChildren(
      h('h2', { id: 'rollback-title' }, 'Roll back'),
      h('p', {}, question),
      h('p', { class: 'grid-note' }, `Apps asking for v${active ?? '?'} keep their answers for the grace period; new queries get v${to}.`),
      kWarning ? h('p', { class: 'k-warning' }, kWarning) : '',
      h(
        'div',
        { class: 'toolbar' },
        h('button', { type: 'button', class: 'danger', onclick: () => void rollback(slug, to) }, `Roll back to v${to}`),
        h('button', { type: 'button', onclick: () => dialog.close() }, 'Cancel'),
      ),
    );
    dialog.showModal();
  }

  async function rollback(slug: string, to: number): Promise<void> {
    dialog.close();
    const from = active;
    try {
      const result = await ctx.api.rollback(slug, to);
      const grace = result.previousVersion === null ? '' : `; v${result.previousVersion} still answers apps in flight for ${result.graceSeconds} s`;
      say(`Rolled back ${slug} from v${from} to v${to}${grace}`, 'good');
    } catch (err) {
      say(`Roll back refused: ${errorText(err)}`, 'bad');
    }
    await reload(false);
  }

  async function afterRename(d: DatasetInfo): Promise<void> {
    await reload(false);
    say(`Renamed: ${d.slug} is now called “${d.name}”. Its slug stays ${d.slug}.`, 'good');
  }

  async function afterDelete(slug: string, name: string): Promise<void> {
    await reload(false);
    say(`Deleted ${name} (${slug}): it answers no queries now. Its usage stays in reports; the slug ${slug} is not reused.`, 'good');
  }

  async function compare(): Promise<void> {
    const slug = ctx.dataset;
    const from = Number(fromSelect.value);
    const to = Number(toSelect.value);
    if (!slug || !from || !to) return say('Choose two versions', 'bad');
    diffOut.replaceChildren(h('p', {}, `Comparing v${from} with v${to}…`));
    try {
      const [a, b] = await Promise.all([ctx.api.table(slug, from), ctx.api.table(slug, to)]);
      renderDiff(diffTables(csvToSheet(a), csvToSheet(b)), from, to);
    } catch (err) {
      diffOut.replaceChildren();
      say(`Compare failed: ${errorText(err)}`, 'bad');
    }
  }

  function renderDiff(diff: TableDiff, from: number, to: number): void {
    const headline = `v${from} → v${to}: ${diff.added.length} added, ${diff.removed.length} removed, ${diff.changed.length} changed, ${diff.unchanged} unchanged`;
    const rows: HTMLElement[] = [];
    const summary = (cells: Record<string, string>) => Object.entries(cells).map(([k, v]) => `${k}=${v}`).join(', ');
    for (const a of diff.added) rows.push(h('tr', { class: 'diff-added' }, h('td', {}, 'added'), h('td', {}, a.id), h('td', {}, summary(a.cells))));
    for (const r of diff.removed) rows.push(h('tr', { class: 'diff-removed' }, h('td', {}, 'removed'), h('td', {}, r.id), h('td', {}, summary(r.cells))));
    for (const c of diff.changed) {
      rows.push(
        h(
          'tr',
          { class: 'diff-changed' },
          h('td', {}, 'changed'),
          h('td', {}, c.id),
          h('td', {}, ...c.cells.flatMap((x, i) => [i > 0 ? '; ' : '', h('strong', {}, x.column), `: ${x.before || '(empty)'} → ${x.after || '(empty)'}`])),
        ),
      );
    }
    const columnsNote = [
      diff.columnsAdded.length ? `columns added: ${diff.columnsAdded.join(', ')}` : '',
      diff.columnsRemoved.length ? `columns removed: ${diff.columnsRemoved.join(', ')}` : '',
    ].filter(Boolean).join(' · ');
    diffOut.replaceChildren(
      h('p', { id: 'diff-summary' }, headline),
      columnsNote ? h('p', {}, columnsNote) : '',
      h(
        'table',
        { class: 'plain', id: 'diff-table' },
        h('thead', {}, h('tr', {}, h('th', { scope: 'col' }, 'Change'), h('th', { scope: 'col' }, 'Site id'), h('th', { scope: 'col' }, 'Cells'))),
        h('tbody', {}, ...rows.slice(0, SHOWN_DIFF_ROWS)),
      ),
      rows.length > SHOWN_DIFF_ROWS ? h('p', {}, `… ${rows.length - SHOWN_DIFF_ROWS} more rows not shown`) : '',
    );
  }

  return {
    element,
    show() {
      void reload();
    },
  };
}

function when(iso: string | null): string {
  if (!iso) return '—';
  return iso.replace('T', ' ').replace(/\.\d+Z?$|Z$/, '').slice(0, 16) + ' UTC';
}

/** A building version's stage and percent, inside its state cell. */
function buildingProgress(version: number, p: { stage: string; percent: number }): HTMLElement {
  return h(
    'span',
    { class: 'row-progress' },
    ' ',
    h('progress', { max: 100, value: p.percent, 'aria-label': `Build progress of v${version}` }),
    ` ${p.stage} · ${Math.round(p.percent)}%`,
  );
}

function day(iso: string | null): string {
  return iso ? iso.slice(0, 10) : '—';
}
