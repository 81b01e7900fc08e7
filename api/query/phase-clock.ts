import type { AnswerPhases } from '../../core/pir/planned-answer.ts';

/**
 * The server time of one answer, by phase, for its Server-Timing header (W3C Server Timing: one
 * metric per phase in one header, `name;dur=ms`). The whole time comes first, named by the round
 * ("answer" or "details"), because clients read the first metric; D1 and R2 waits between phases
 * are not counted (skip), so the phases are the CPU work of the answer.
 */
export function phaseClock() {
  const spent = new Map<string, number>();
  let last = performance.now();
  const add = (name: string, ms: number) => spent.set(name, (spent.get(name) ?? 0) + ms);
  return {
    /** Charges the time since the last mark to `name`. */
    lap(name: string) {
      const now = performance.now();
      add(name, now - last);
      last = now;
    },
    /** Restarts the clock without charging anything (a wait for storage). */
    skip() {
      last = performance.now();
    },
    /** Adds the phases measured inside the answer (in, products, blinding, out). */
    add(phases: AnswerPhases) {
      for (const [name, ms] of Object.entries(phases)) add(name, ms);
      last = performance.now();
    },
    header(label: string): string {
      const total = [...spent.values()].reduce((a, b) => a + b, 0);
      const metrics = [`${label};dur=${total.toFixed(1)};desc="PIR answer"`];
      for (const [name, ms] of spent) metrics.push(`${name};dur=${ms.toFixed(1)}`);
      return metrics.join(', ');
    },
  };
}
