/**
 * A long computation written as a generator that yields at checkpoints, each yield the share
 * (0 to 1) of its work done so far, and returns its result. The same code then runs in one go
 * (tests, the CLI, the console's Web Worker) or in slices (the Worker's build, which must let the
 * requests sharing its isolate run between slices: a Worker isolate runs one thing at a time).
 * Checkpoints sit after small units of work (a kd leaf, 64 grid boundary pieces, 512 sealed
 * records), a few milliseconds at most.
 */
export type Steps<T> = Generator<number, T, undefined>;

/** Runs steps to the end at once, reporting progress (0 to 1) at every checkpoint. */
export function runSteps<T>(steps: Steps<T>, onProgress?: (share: number) => void): T {
  for (;;) {
    const next = steps.next();
    if (next.done) return next.value;
    onProgress?.(next.value);
  }
}

/**
 * Runs steps to the end, awaiting `pause` at every checkpoint: the caller decides how often it
 * really lets other work run (core never touches timers).
 */
export async function runStepsPaused<T>(steps: Steps<T>, pause: (share: number) => void | Promise<void>): Promise<T> {
  for (;;) {
    const next = steps.next();
    if (next.done) return next.value;
    await pause(next.value);
  }
}

/** The steps of one part of a larger job: its shares mapped into [from, from + width). */
export function* part<T>(steps: Steps<T>, from: number, width: number): Steps<T> {
  for (;;) {
    const next = steps.next();
    if (next.done) return next.value;
    yield from + width * next.value;
  }
}
