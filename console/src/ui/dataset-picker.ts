import type { DatasetInfo } from '../api/nearveil.ts';
import { h } from './dom.ts';
import type { ConsoleContext } from './context.ts';

/** How a dataset reads in the list: its name, its slug, and which version apps get. */
export function datasetLabel(d: DatasetInfo): string {
  return `${d.name} (${d.slug})${d.activeVersion ? ` · v${d.activeVersion} active` : ' · no active version'}`;
}

/**
 * A labelled dataset chooser shared by the screens; keeps the context's dataset in step. Its
 * list is read again by refresh(): screens call it when shown and after anything that changes
 * a dataset (publish, rollback, build, rename, delete), so it never shows a stale version.
 */
export function datasetPicker(ctx: ConsoleContext, id: string, onPick: (slug: string | null) => void) {
  let listed: DatasetInfo[] = [];
  const select = h('select', { id }) as HTMLSelectElement;
  const label = h('label', { for: id }, 'Dataset ', select);
  select.addEventListener('change', () => {
    ctx.setDataset(select.value || null);
    onPick(select.value || null);
  });
  return {
    element: label,
    select,
    /** The dataset chosen, as last listed; null when there is none. */
    current(): DatasetInfo | null {
      return listed.find((d) => d.slug === select.value) ?? null;
    },
    async refresh(): Promise<string | null> {
      const list = await ctx.api.datasets();
      listed = list;
      select.replaceChildren(...list.map((d) => h('option', { value: d.slug }, datasetLabel(d))));
      if (list.length === 0) select.append(h('option', { value: '' }, 'no datasets yet'));
      const want = ctx.dataset && list.some((d) => d.slug === ctx.dataset) ? ctx.dataset : list[0]?.slug ?? null;
      select.value = want ?? '';
      if (want !== ctx.dataset) ctx.setDataset(want);
      return want;
    },
  };
}
