import { readFileSync } from 'node:fs';
import { buildVersion } from '../../../core/build/build-version.ts';
import type { LayoutChoice } from '../../../core/build/choose-layout.ts';
import { COST_MODEL } from '../../../core/build/cost-model.ts';
import { MAX_K, type PlanRecord } from '../../../core/geo/manifest.ts';
import { parseSiteTable } from '../../../core/geo/site-table.ts';
import { CliError } from '../cli-error.ts';
import { integerFlag, parseCommand } from '../options.ts';

export const PLAN_HELP = `nearveil plan FILE [--layout auto|grid|adaptive] [--max-k K] [--json]
  Builds the site table locally, without any server, and prints what a query would cost: the
  region layout chosen and every layout weighed, a histogram of candidate list lengths, the
  matrix shape and bits, bytes each way, the server's products (plain and with the chosen answer
  plan) and the modelled seconds per query. --layout grid discloses only a box around the sites;
  adaptive discloses where they are dense. --max-k K builds for the K nearest (1 to 8).`;

export async function planCommand(args: string[], print: (line: string) => void): Promise<void> {
  const { values, positionals } = parseCommand('plan', args, {
    json: { type: 'boolean', default: false },
    layout: { type: 'string', default: 'auto' },
    'max-k': { type: 'string' },
    help: { type: 'boolean', short: 'h', default: false },
  });
  if (values.help) return print(PLAN_HELP);
  if (positionals.length !== 1) throw new CliError(`plan: expected one FILE, got ${positionals.length === 0 ? 'none' : positionals.join(' ')}`);
  const file = positionals[0]!;
  const maxK = integerFlag(values['max-k'], '--max-k', 1, MAX_K, 1);
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (err) {
    throw new CliError(`cannot read ${file}: ${err instanceof Error ? err.message : String(err)}`);
  }
  const built = await buildVersion(parseSiteTable(text), { dataset: 'plan', version: 1, layout: layoutOption(values.layout), maxK });
  const m = built.manifest;
  const chosen = built.layoutsTried.find((g) => g.chosen)!;
  if (values.json) {
    print(
      JSON.stringify({
        siteCount: m.siteCount,
        maxK: m.maxK,
        layout: m.layout,
        record: m.record,
        matrix: m.matrix,
        matrixBits: m.matrix.rows * m.matrix.columns,
        bitsPerSite: (m.matrix.rows * m.matrix.columns) / m.siteCount,
        perQuery: { bytesUp: chosen.cost.bytesUp, bytesDown: chosen.cost.bytesDown, serverProducts: m.matrix.plan.products },
        listLengths: built.stats.listLengths,
        buildMs: built.stats.buildMs,
        layoutsTried: built.layoutsTried,
        costModel: COST_MODEL,
      }),
    );
    return;
  }
  const kib = (b: number) => `${(b / 1024).toFixed(0)} KiB`;
  const lines = [
    `${m.siteCount} sites, built for the ${m.maxK === 1 ? 'nearest site' : `${m.maxK} nearest sites`} in ${(built.stats.buildMs / 1000).toFixed(2)} s (nothing uploaded).`,
    `Layout: ${chosen.label} (${built.stats.regions} regions); candidate lists padded to ${m.record.slotsPerRegion} slots of ${m.record.slotBits} bits (mean list ${built.stats.meanList.toFixed(1)}).`,
    `Discloses: ${disclosure(m.layout.kind)}.`,
    `Matrix: ${m.matrix.rows} x ${m.matrix.columns} = ${m.matrix.rows * m.matrix.columns} bits (${(m.matrix.rows * m.matrix.columns / m.siteCount).toFixed(0)} bits per site), ${m.matrix.ones} ones.`,
    `Per query (${COST_MODEL.modulusBits}-bit key): ${kib(chosen.cost.bytesUp)} up, ${kib(chosen.cost.bytesDown)} down; server multiplications ${m.matrix.plan.products} with the ${planLabel(m.matrix.plan)} plan, ${m.matrix.plan.plainProducts} plain.`,
    `Answer plans weighed: ${(m.matrix.plan.weighed ?? []).map((w) => `${w.plan} ${w.products}`).join(', ')}.`,
    '',
    'Candidate list lengths (sites per region, before padding):',
    ...histogram(built.stats.listLengths),
    '',
    'Layouts weighed (seconds per query by the cost model: transfer + server + client; >= marks a lower bound,',
    'the layout was not built because even that bound lost):',
    '  layout                 regions  list   R x C           up       down     products   seconds',
    ...built.layoutsTried.map((g) => {
      const ge = g.bound ? '>=' : '  ';
      return `${g.chosen ? '* ' : '  '}${g.label.padEnd(22)} ${String(g.regions).padStart(7)} ${ge}${String(g.maxList).padStart(4)}   ${`${g.cost.rows} x ${g.cost.columns}`.padEnd(14)}  ${kib(g.cost.bytesUp).padStart(8)} ${kib(g.cost.bytesDown).padStart(8)} ${ge}${String(g.cost.products).padStart(9)}  ${ge}${g.cost.seconds.total.toFixed(2)}`;
    }),
    "Grid layouts disclose only their box; adaptive layouts disclose where sites are dense.",
    '',
    `Cost model: ${COST_MODEL.linkBytesPerSecond * 8 / 1e6} Mbit/s link, ${COST_MODEL.serverSecondsPerProduct * 1e6} us per server product, ` +
      `${COST_MODEL.clientSecondsPerDecodedRow * 1e6} us per decoded row, ${COST_MODEL.clientSecondsPerColumn * 1e6} us per query column (plain-product estimate before the answer plan).`,
  ];
  print(lines.join('\n'));
}

function disclosure(kind: 'grid' | 'kd'): string {
  return kind === 'grid'
    ? "the grid box (the sites' bounding box plus a margin) and the longest list; not where sites are inside it"
    : 'where sites are dense (the splits follow them), not where each one is; choose --layout grid to disclose only a box';
}

/** Bars of regions per list length, lengths grouped so at most 12 lines print. */
function histogram(counts: readonly number[]): string[] {
  const longest = counts.length - 1;
  const width = Math.max(1, Math.ceil((longest + 1) / 12));
  const rows: Array<[string, number]> = [];
  for (let from = 0; from <= longest; from += width) {
    const to = Math.min(longest, from + width - 1);
    let regions = 0;
    for (let n = from; n <= to; n++) regions += counts[n] ?? 0;
    rows.push([from === to ? `${from}` : `${from}-${to}`, regions]);
  }
  const most = Math.max(1, ...rows.map(([, r]) => r));
  return rows.map(([label, r]) => `  ${label.padStart(9)} ${String(r).padStart(8)}  ${'#'.repeat(Math.round((40 * r) / most))}`);
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
