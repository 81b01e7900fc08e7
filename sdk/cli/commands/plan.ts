import { coordinateWarnings } from '../../../core/geo/land-share.ts';
import { worldLand } from '../world-land.ts';
import { buildFromColumns, type BuildResult } from '../../../core/build/build-version.ts';
import { readSiteColumns } from '../../../core/build/site-columns.ts';
import { progressLine, type ProgressStream } from '../progress-line.ts';
import { LAYOUT_CHOICES, type LayoutChoice } from '../../../core/build/choose-layout.ts';
import { LAYOUT_DISCLOSURE, LAYOUT_FLAG } from '../../../core/build/layout-disclosure.ts';
import { COST_MODEL } from '../../../core/build/cost-model.ts';
import { MAX_K, type PlanRecord } from '../../../core/geo/manifest.ts';
import { CliError } from '../cli-error.ts';
import { readUtf8File } from '../read-utf8-file.ts';
import { integerFlag, parseCommand } from '../options.ts';

export const PLAN_HELP = `nearveil plan FILE [--layout auto|grid|adaptive|veiled] [--max-k K] [--json]
  Builds the site table locally, without any server, and prints what a query would cost: the
  layout chosen and every layout weighed (grid, adaptive and veiled, each with what it
  discloses), the matrix shape, bytes each way, the server's products (plain and with the chosen
  answer plan) and the modelled seconds per query. --layout grid discloses only a box around the
  sites; adaptive discloses where they are dense; veiled only a coarse grid, for a second private
  round per query. auto picks the cheapest of grid and adaptive whose matrix a Worker can answer
  from (at most 64 MiB for one answer), never veiled; each layout weighed says why it was or was
  not chosen. --max-k K builds for the K nearest
  (1 to 8), and prints a histogram of candidate list lengths. Progress goes to stderr.`;

export async function planCommand(args: string[], print: (line: string) => void, progressStream: ProgressStream = process.stderr): Promise<void> {
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
  const { text } = readUtf8File(file);
  // Every kind is weighed, so the cost of each disclosure shows side by side; progress on stderr.
  const progress = progressLine(progressStream, { plain: values.json });
  let built: BuildResult;
  let warnings: string[] = [];
  try {
    progress.update('reading', 0);
    const sites = readSiteColumns(text);
    warnings = coordinateWarnings(worldLand(), sites.lats, sites.lons);
    built = await buildFromColumns(sites, { dataset: 'plan', version: 1, layout: layoutOption(values.layout), weighAll: true, maxK }, { onProgress: (p) => progress.update(p.stage, p.percent) });
  } finally {
    progress.done();
  }
  for (const w of warnings) progressStream.write(`Warning: ${w}\n`);
  const m = built.manifest;
  const chosen = built.layoutsTried.find((g) => g.chosen)!;
  if (values.json) {
    print(JSON.stringify({ siteCount: m.siteCount, maxK: m.maxK, listLengths: built.stats.listLengths, layout: m.layout, record: m.record, matrix: m.matrix, ...(m.partition ? { partition: m.partition } : {}), buildMs: built.stats.buildMs, layoutsTried: built.layoutsTried, costModel: COST_MODEL, warnings }));
    return;
  }
  const kib = (b: number) => `${(b / 1024).toFixed(0)} KiB`;
  const lines = [
    `${m.siteCount} sites, built for the ${m.maxK === 1 ? 'nearest site' : `${m.maxK} nearest sites`} in ${(built.stats.buildMs / 1000).toFixed(2)} s (nothing uploaded).`,
    `Layout: ${chosen.label} (${built.stats.regions} regions); candidate lists padded to ${m.record.slotsPerRegion} slots of ${m.record.slotBits} bits (mean list ${built.stats.meanList.toFixed(1)}).`,
    `Discloses: ${LAYOUT_DISCLOSURE[m.layout.kind]}.`,
    ...(m.partition
      ? [
          `Partition matrix (round 1): ${m.partition.rows} x ${m.partition.columns} bits, one ${m.layout.kind === 'veiled' ? m.layout.partitionBits : 0}-bit record per coarse cell, ${m.partition.ones} ones; ` +
            `server products ${m.partition.plan.products} with the ${planLabel(m.partition.plan)} plan.`,
        ]
      : []),
    `${m.partition ? 'Cell matrix (round 2)' : 'Matrix'}: ${m.matrix.rows} x ${m.matrix.columns} bits (${(((m.partition ? m.partition.rows * m.partition.columns : 0) + m.matrix.rows * m.matrix.columns) / m.siteCount).toFixed(0)} bits per site${m.partition ? ', both matrices' : ''}), ${m.matrix.ones} ones.`,
    `Per query (${COST_MODEL.modulusBits}-bit key${m.partition ? ', both rounds' : ''}): ${kib(chosen.cost.bytesUp)} up, ${kib(chosen.cost.bytesDown)} down; ` +
      `server products ${m.matrix.plan.products + (m.partition?.plan.products ?? 0)} with the chosen plans, ${m.matrix.plan.plainProducts + (m.partition?.plan.plainProducts ?? 0)} plain.`,
    `Answer plans weighed: ${(m.matrix.plan.weighed ?? []).map((w) => `${w.plan} ${w.products}`).join(', ')}.`,
    '',
    `Layouts weighed (seconds per query by the cost model: transfer + server + client; ${values.layout === 'veiled' ? 'veiled asked for' : `${values.layout} picks among ${values.layout === 'auto' ? 'grid and adaptive' : values.layout}`} those a Worker can answer from; >= marks lower bounds of a layout not built):`,
    '  layout                 regions   list  R x C                        up       down     products   seconds  answer MiB  verdict',
    ...built.layoutsTried.map((g) =>
      `${g.chosen ? '*' : ' '} ${g.label.padEnd(22)} ${String(g.regions).padStart(7)}  ${((g.bound ? '>=' : '') + String(g.maxList)).padStart(5)}` +
      `  ${shape(g).padEnd(27)}  ${kib(g.cost.bytesUp).padStart(8)} ${kib(g.cost.bytesDown).padStart(8)}  ${String(g.cost.products).padStart(9)}   ${g.cost.seconds.total.toFixed(2).padStart(7)}  ${(g.answerBytes / 2 ** 20).toFixed(1).padStart(10)}  ${VERDICT[g.verdict]}`,
    ),
    '',
    'Candidate list lengths (sites per region, before padding):',
    ...histogram(built.stats.listLengths),
    '',
    'What each layout discloses in its public manifest:',
    ...(['grid', 'kd', 'veiled'] as const).map((kind) => `  ${LAYOUT_FLAG[kind].padEnd(9)} ${LAYOUT_DISCLOSURE[kind]}.`),
    '',
    `Cost model: ${COST_MODEL.linkBytesPerSecond * 8 / 1e6} Mbit/s link, ${COST_MODEL.serverSecondsPerProduct * 1e6} us per server product, ` +
      `${COST_MODEL.clientSecondsPerDecodedRow * 1e6} us per decoded row, ${COST_MODEL.clientSecondsPerColumn * 1e6} us per query column (plain-product estimate before the answer plan).`,
  ];
  print(lines.join('\n'));
}

const VERDICT = {
  chosen: 'chosen: the cheapest that fits',
  costlier: 'costlier per query',
  too_large: 'too large to answer from (over 64 MiB)',
  not_asked: 'not weighed by this choice (shown for comparison)',
} as const;

/** R x C of the matrix; for a veiled layout the partition round's first (two private rounds). */
function shape(g: BuildResult['layoutsTried'][number]): string {
  const cells = `${g.cost.rows} x ${g.cost.columns}`;
  return g.rounds ? `${g.rounds.partition.rows} x ${g.rounds.partition.columns} + ${cells}` : cells;
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
  if (value === undefined) return 'auto';
  if ((LAYOUT_CHOICES as readonly string[]).includes(value)) return value as LayoutChoice;
  throw new CliError(`--layout: expected ${LAYOUT_CHOICES.join(', ')}, got "${value}"`);
}
