import { h } from './dom.ts';
import type { ConsoleContext } from './context.ts';

/** A labelled dataset chooser shared by the screens; keeps the context's dataset in step. */
export function datasetPicker(ctx: ConsoleContext, id: string, onPick: (slug: string | null) => void) {
  const select = h('select', { id }) as HTMLSelectElement;
  const label = h('label', { for: id }, 'Dataset ', select);
  select.addEventListener('change', () => {
    ctx.setDataset(select.value || null);
    onPick(select.value || null);
  });
  return {
    element: label,
    select,
    async refresh(): Promise<string | null> {
      const list = await ctx.api.datasets();
      select.replaceChildren(...list.map((d) => h('option', { value: d.slug }, `${d.name} (${d.slug})${d.activeVersion ? ` · v${d.activeVersion} live` : ''}`)));
      if (list.length === 0) select.append(h('option', { value: '' }, 'no datasets yet'));
      const want = ctx.dataset && list.some((d) => d.slug === ctx.dataset) ? ctx.dataset : list[0]?.slug ?? null;
      select.value = want ?? '';
      if (want !== ctx.dataset) ctx.setDataset(want);
      return want;
    },
  };
}
