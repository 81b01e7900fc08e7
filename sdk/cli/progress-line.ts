/** Where progress is drawn: process.stderr, or a stand-in in tests. */
export interface ProgressStream {
  isTTY?: boolean;
  columns?: number;
  write(text: string): unknown;
}

export interface ProgressLine {
  /** The work is at `stage`, `percent` (0-100) done. */
  update(stage: string, percent: number): void;
  /** Ends the line (on a terminal, the last state stays on screen). */
  done(): void;
}

/**
 * Progress of a long command on stderr, so stdout keeps only the result: on a terminal one line
 * redrawn in place, `[#####.....]  42%  regions  0:12` (a bar, percent, stage, elapsed time);
 * otherwise, or when `plain` is set (--json), a plain line whenever the stage changes or another
 * tenth of the work is done.
 */
export function progressLine(stream: ProgressStream, options: { plain?: boolean; now?: () => number } = {}): ProgressLine {
  const now = options.now ?? Date.now;
  const started = now();
  const tty = stream.isTTY === true && options.plain !== true;
  let last = { stage: '', tenth: -1 };
  let drawn = false;
  const elapsed = () => {
    const s = Math.floor((now() - started) / 1000);
    return `${Math.floor(s / 60)}:${String(s % 60).padStart(2, '0')}`;
  };
  return {
    update(stage, percent) {
      const p = Math.max(0, Math.min(100, Math.floor(percent)));
      if (tty) {
        const width = Math.max(10, Math.min(40, (stream.columns ?? 80) - 40));
        const filled = Math.round((width * p) / 100);
        stream.write(`\r[${'#'.repeat(filled)}${'.'.repeat(width - filled)}] ${String(p).padStart(3)}%  ${stage.padEnd(16)} ${elapsed()}\x1b[K`);
        drawn = true;
        return;
      }
      const tenth = Math.floor(p / 10);
      if (stage === last.stage && tenth === last.tenth) return;
      last = { stage, tenth };
      stream.write(`${stage} ${p}% (${elapsed()})\n`);
    },
    done() {
      if (tty && drawn) stream.write('\n');
    },
  };
}
