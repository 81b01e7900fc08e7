// Bundled for headless Chromium by scripts/bench-proof-browser.ts: the client's one-off key work,
// key generation (WebCrypto) and the modulus proof, timed where a web app would run it.
import { proveModulus } from '../../core/modulus-proof/prove-modulus.ts';
import { verifyModulusProof } from '../../core/modulus-proof/verify-modulus.ts';
import { generateKeyPair } from '../../core/pir/keys.ts';
import { encodeModulusProof } from '../../core/pir/wire.ts';

export async function keyAndProof(bits: number, lowOnes: boolean) {
  const t0 = performance.now();
  const key = await generateKeyPair({ modulusBits: bits, lowOnes });
  const t1 = performance.now();
  const proof = proveModulus(key);
  const t2 = performance.now();
  verifyModulusProof(proof);
  const t3 = performance.now();
  return { generateMs: t1 - t0, proveMs: t2 - t1, verifyMs: t3 - t2, proofBytes: encodeModulusProof(proof).length };
}

(globalThis as unknown as { keyAndProof: typeof keyAndProof }).keyAndProof = keyAndProof;
