import { canAdminister } from '../api/client.ts';
import type { BuildOptions, VersionInfo } from '../api/nearveil.ts';
import { csvToSheet } from '../io/csv-sheet.ts';
import type { ConsoleContext, Screen } from '../ui/context.ts';
import { datasetPicker } from '../ui/dataset-picker.ts';
import { errorText, fmt, h, plainTable, setStatus } from '../ui/dom.ts';
import { diffTables, type TableDiff } from './table-diff.ts';

const LAYOUT_NAMES = { kd: 'adaptive', grid: 'grid', veiled: 'veiled' } as const;

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
    h('option', { value: 'auto' }, 'automatic (cheapest)'),
    h('option', { value: 'adaptive' }, 'adaptive regions'),
    h('option', { value: 'grid' }, 'uniform grid'),
    h('option', { value: 'veiled' }, 'veiled (two rounds, nearest only)'),
  ) as HTMLSelectElement;
  const kInput = h('input', { id: 'build-k', type: 'number', min: 1, max: 8, step: 1, value: 1 }) as HTMLInputElement;
  let versions: VersionInfo[] = [];
  let active: number | null = null;
  // While a version is building (started here, from the CLI or by another person) the list is
  // read again every POLL_MS, so its row shows the stage and percent and then the result.
  let refresh: ReturnType<typeof setTimeout> | null = null;
  // Editors build; publishing and rolling back are for tenant admins (the server enforces it too).
  const mayPublish = canAdminister(ctx.signed);

  const element = h(
    'section',
    { 'aria-label': 'Versions' },
    h('div', { class: 'toolbar' }, picker.element, h('button', { type: 'button', onclick: () => void load() }, 'Refresh')),
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
      h('p', { class: 'grid-note' }, 'More sites per answer make every query larger; the veiled layout also hides where regions are, at about 1.2-1.3 times the bytes.'),
    ),
    progressBox,
    h(
      'div',
      { class: 'panel' },
      h('h2', {}, 'Versions'),
      plainTable('versions-table', ['Version', 'State', 'Sites', 'Matrix', 'Author', 'Saved', 'Built', 'Published', 'Actions'], tableBody),
    ),
    h(
      'div',
      { class: 'panel', hidden: !mayPublish },
      h('h2', {}, 'Roll back'),
      h(
        'div',
        { class: 'toolbar' },
        h('label', { for: 'rollback-to' }, 'Make this version live again ', rollbackTarget),
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
  );

  /** Reloads the list; `announce` false keeps the status line of the action that just ran. */
  async function load(announce = true): Promise<void> {
    const slug = ctx.dataset;
    if (refresh !== null) clearTimeout(refresh);
    refresh = null;
    if (!slug) return say('No dataset yet: create one under Site table');
    try {
      const listed = await ctx.api.versions(slug);
      if (slug !== ctx.dataset) return;
      versions = listed.versions;
      active = listed.activeVersion;
      renderTable(slug);
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
      if (announce) say(`${slug}: ${versions.length} version${versions.length === 1 ? '' : 's'}${active ? `, v${active} live` : ', none live yet'}`);
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
          h('td', { class: 'matrix', title: v.layoutReason ?? null }, v.matrix ? `${fmt.format(v.matrix.rows)} × ${fmt.format(v.matrix.columns)} · ${LAYOUT_NAMES[v.layout ?? 'kd']} · k = ${v.maxK ?? 1}` : '—'),
          h('td', { class: 'author' }, v.author ?? 'not recorded'),
          h('td', {}, when(v.createdAt)),
          h('td', {}, when(v.builtAt)),
          h('td', {}, when(v.publishedAt)),
          actions,
        );
      }),
    );
  }

  async function build(slug: string, version: number): Promise<void> {
    const maxK = Number(kInput.value);
    if (!Number.isInteger(maxK) || maxK < 1 || maxK > 8) return say(`k: expected a whole number from 1 to 8, got "${kInput.value}"`, 'bad');
    progressBox.hidden = false;
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
      say(`Built ${slug} v${version} (${seconds} s). Publish it to make it live.`, 'good');
    } catch (err) {
      progressText.textContent = `v${version}: build failed`;
      say(`Build of v${version} failed: ${errorText(err)}`, 'bad');
    }
    await load(false);
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
    try {
      const result = await ctx.api.publish(slug, version);
      say(`v${result.activeVersion} of ${slug} is live${result.previousVersion ? ` (was v${result.previousVersion})` : ''}`, 'good');
    } catch (err) {
      say(`Publish refused: ${errorText(err)}`, 'bad');
    }
    await load(false);
  }

  function confirmRollback(): void {
    const slug = ctx.dataset;
    const to = Number(rollbackTarget.value);
    if (!slug || !to) return say('There is no earlier published version to roll back to', 'bad');
    const question = `Roll back ${slug} from v${active ?? '?'} (live now) to v${to}?`;
    dialog.replaceChildren(
      h('h2', { id: 'rollback-title' }, 'Roll back'),
      h('p', {}, question),
      h('p', { class: 'grid-note' }, `Apps asking for v${active ?? '?'} keep their answers for the grace period; new queries get v${to}.`),
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
    await load(false);
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
      void picker.refresh().then(() => load()).catch((err) => say(errorText(err), 'bad'));
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
