/**
 * The build's pause (core/steps): every `every`th checkpoint it waits for a zero-delay timer, so
 * requests that reached the same isolate run before the build goes on (an isolate runs one thing
 * at a time, and WebCrypto and pure computation never give way by themselves). Checkpoints are
 * about 10 ms of work apart (core/steps), so the default pauses at each; counting them, not
 * reading clocks, because a Worker's clock stands still during computation.
 */
export function isolatePause(every = 1): () => Promise<void> | undefined {
  let calls = 0;
  return () => (++calls % every === 0 ? new Promise<void>((resolve) => setTimeout(resolve, 0)) : undefined);
}
