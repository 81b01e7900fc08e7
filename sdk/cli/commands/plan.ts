import { readFileSync } from 'node:fs';
import { buildVersion } from '../../../core/build/build-version.ts';
import type { LayoutChoice } from '../../../core/build/choose-layout.ts';
import { COST_MODEL } from '../../../core/build/cost-model.ts';
import type { PlanRecord } from '../../../core/geo/manifest.ts';
import { parseSiteTable } from '../../../core/geo/site-table.ts';
import { CliError } from '../cli-error.ts';
import { parseCommand } from '../options.ts';

export const PLAN_HELP = `nearveil plan FILE [--layout auto|grid|adaptive] [--json]
  Builds the site table locally, without any server, and prints what a query would cost: the
  grid chosen and every grid weighed, the matrix shape, bytes each way, the server's products
  (plain and with the chosen answer plan) and the modelled seconds per query. --layout grid
  discloses only a box around the sites; adaptive discloses where they are dense.`;

export async function planCommand(args: string[], print: (line: string) => void): Promise<void> {
  const { values, positionals } = parseCommand('plan', args, {
    json: { type: 'boolean', default: false },
    layout: { type: 'string', default: 'auto' },
    help: { type: 'boolean', short: 'h', default: false },
  });
  if (values.help) return print(PLAN_HELP);
  if (positionals.length !== 1) throw new CliError(`plan: expected one FILE, got ${positionals.length === 0 ? 'none' : positionals.join(' ')}`);
  const file = positionals[0]!;
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (err) {
    throw new CliError(`cannot read ${file}: ${err instanceof Error ? err.message : String(err)}`);
  }
  const built = await buildVersion(parseSiteTable(text), { dataset: 'plan', version: 1, layout: layoutOption(values.layout) });
  const m = built.manifest;
  const chosen = built.layoutsTried.find((g) => g.chosen)!;
  if (values.json) {
    print(JSON.stringify({ siteCount: m.siteCount, layout: m.layout, record: m.record, matrix: m.matrix, buildMs: built.stats.buildMs, layoutsTried: built.layoutsTried, costModel: COST_MODEL }));
    return;
  }
  const kib = (b: number) => `${(b / 1024).toFixed(0)} KiB`;
  const lines = [
    `${m.siteCount} sites, built in ${(built.stats.buildMs / 1000).toFixed(2)} s (nothing uploaded).`,
    `Layout: ${chosen.label} (${built.stats.regions} regions); candidate lists padded to ${m.record.slotsPerRegion} slots of ${m.record.slotBits} bits (mean list ${built.stats.meanList.toFixed(1)}).`,
    `Discloses: ${m.layout.kind === 'grid' ? "the grid box (the sites' bounding box plus a margin) and the longest list; not where sites are inside it" : 'where sites are dense (the splits follow them), not where each one is; choose --layout grid to disclose only a box'}.`,
    `Matrix: ${m.matrix.rows} x ${m.matrix.columns} bits (${(m.matrix.rows * m.matrix.columns / m.siteCount).toFixed(0)} bits per site), ${m.matrix.ones} ones.`,
    `Per query (${COST_MODEL.modulusBits}-bit key): ${kib(chosen.cost.bytesUp)} up, ${kib(chosen.cost.bytesDown)} down; server products ${m.matrix.plan.products} with the ${planLabel(m.matrix.plan)} plan, ${m.matrix.plan.plainProducts} plain.`,
    `Answer plans weighed: ${(m.matrix.plan.weighed ?? []).map((w) => `${w.plan} ${w.products}`).join(', ')}.`,
    '',
    'Layouts weighed (seconds per query by the cost model: transfer + server + client):',
    '  layout                 regions  list   R x C           up       down     products   seconds',
    ...built.layoutsTried.map((g) =>
      `${g.chosen ? '* ' : '  '}${g.label.padEnd(22)} ${String(g.regions).padStart(7)}  ${String(g.maxList).padStart(4)}   ${`${g.cost.rows} x ${g.cost.columns}`.padEnd(14)}  ${kib(g.cost.bytesUp).padStart(8)} ${kib(g.cost.bytesDown).padStart(8)}  ${String(g.cost.products).padStart(9)}   ${g.cost.seconds.total.toFixed(2)}`,
    ),
    '',
    `Cost model: ${COST_MODEL.linkBytesPerSecond * 8 / 1e6} Mbit/s link, ${COST_MODEL.serverSecondsPerProduct * 1e6} us per server product, ` +
      `${COST_MODEL.clientSecondsPerDecodedRow * 1e6} us per decoded row, ${COST_MODEL.clientSecondsPerColumn * 1e6} us per query column (plain-product estimate before the answer plan).`,
  ];
  print(lines.join('\n'));
}

function planLabel(plan: PlanRecord): string {
  if (plan.kind === 'blocked') return `blocked (b = ${plan.blockColumns})`;
  if (plan.kind === 'mined') return `mined (${plan.rules} shared column sets)`;
  return 'plain';
}

/** The --layout flag, shared by plan and import. */
export function layoutOption(value: string | undefined): LayoutChoice {
  if (value === undefined || value === 'auto' || value === 'grid' || value === 'adaptive') return value ?? 'auto';
  throw new CliError(`--layout: expected auto, grid or adaptive, got "${value}"`);
}
