import { describe, expect, it } from 'vitest';
import { progressLine } from '../../sdk/cli/progress-line.ts';

/** A stand-in for stderr that keeps what was written. */
function stream(isTTY: boolean) {
  const writes: string[] = [];
  return { isTTY, columns: 80, writes, write: (text: string) => writes.push(text) };
}

describe('progress on the terminal', () => {
  it('redraws one line on a TTY: bar, percent, stage and elapsed time, ended by a newline', () => {
    let t = 0;
    const out = stream(true);
    const line = progressLine(out, { now: () => t });
    line.update('regions', 42.7);
    t = 75_000;
    line.update('plan', 100);
    line.done();
    expect(out.writes[0]).toBe(`\r[${'#'.repeat(17)}${'.'.repeat(23)}]  42%  regions          0:00\x1b[K`);
    expect(out.writes[1]).toBe(`\r[${'#'.repeat(40)}] 100%  plan             1:15\x1b[K`);
    expect(out.writes[2]).toBe('\n');
  });

  it('writes plain lines when not a TTY, or with --json: one per stage or tenth of the work', () => {
    for (const [isTTY, plain] of [[false, false], [true, true]] as const) {
      const out = stream(isTTY);
      const line = progressLine(out, { plain, now: () => 0 });
      for (const [stage, p] of [['details', 1], ['details', 5], ['details', 10], ['regions', 12], ['regions', 19], ['regions', 25]] as const) line.update(stage, p);
      line.done();
      expect(out.writes).toEqual(['details 1% (0:00)\n', 'details 10% (0:00)\n', 'regions 12% (0:00)\n', 'regions 25% (0:00)\n']);
    }
  });
});
