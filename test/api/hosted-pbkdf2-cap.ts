import { vi } from 'vitest';

/** The most PBKDF2 iterations hosted Workers compute (workerd issue 1346); the local runtime allows more. */
export const HOSTED_PBKDF2_MAX_ITERATIONS = 100_000;

/**
 * Runs `body` with WebCrypto's deriveBits refusing PBKDF2 above 100,000 iterations with the
 * NotSupportedError hosted Workers give, as they do; `refused()` counts the refusals so far.
 */
export async function withHostedPbkdf2Cap<T>(body: (refused: () => number) => Promise<T>): Promise<T> {
  let refusals = 0;
  const real = crypto.subtle.deriveBits.bind(crypto.subtle);
  const spy = vi.spyOn(crypto.subtle, 'deriveBits').mockImplementation(async (algorithm, key, length) => {
    const iterations = (algorithm as Pbkdf2Params).iterations;
    if ((algorithm as Algorithm).name === 'PBKDF2' && iterations > HOSTED_PBKDF2_MAX_ITERATIONS) {
      refusals++;
      throw new DOMException(`Pbkdf2 failed: iteration counts above ${HOSTED_PBKDF2_MAX_ITERATIONS} are not supported (requested ${iterations}).`, 'NotSupportedError');
    }
    return real(algorithm, key, length);
  });
  try {
    return await body(() => refusals);
  } finally {
    spy.mockRestore();
  }
}
