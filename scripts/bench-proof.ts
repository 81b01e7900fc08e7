// `npm run bench`, modulus proofs: what a client pays once per key (proving) and the server once
// per registration (checking), at both modulus sizes and for both key forms, plus what the check
// adds to every query (the modulus's fingerprint; the lookup is a Map hit in a warm isolate).
import { modPow } from '../core/bigint/modular.ts';
import { modulusFingerprint } from '../core/modulus-proof/fingerprint.ts';
import { proveModulus } from '../core/modulus-proof/prove-modulus.ts';
import { verifyModulusProof } from '../core/modulus-proof/verify-modulus.ts';
import { generateKeyPair } from '../core/pir/keys.ts';
import { decodeModulusProof, encodeModulusProof } from '../core/pir/wire.ts';

export interface ProofRow {
  bits: number;
  lowOnes: boolean;
  proofBytes: number;
  proveMs: number;
  /** Decode of the body and the whole check, as the registration route runs them. */
  verifyMs: number;
  fingerprintUs: number;
  /** One plain modular exponentiation modulo p (half the modulus), full-length exponent, same run: the unit proving is counted in. */
  modPowHalfMs: number;
}

function median(values: number[]): number {
  return [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)]!;
}

/** Proving over `keys` fresh keys per form (primes differ, so does Tonelli-Shanks' work), checking five times each. */
export async function proofBench(keys: number): Promise<ProofRow[]> {
  const rows: ProofRow[] = [];
  for (const bits of [2048, 3072]) {
    for (const lowOnes of [true, false]) {
      const prove: number[] = [];
      const verify: number[] = [];
      const fingerprint: number[] = [];
      const power: number[] = [];
      let proofBytes = 0;
      for (let i = 0; i < keys; i++) {
        const key = await generateKeyPair({ modulusBits: bits, lowOnes });
        const t0 = performance.now();
        const body = encodeModulusProof(proveModulus(key));
        prove.push(performance.now() - t0);
        proofBytes = body.length;
        for (let j = 0; j < 5; j++) {
          const t1 = performance.now();
          verifyModulusProof(decodeModulusProof(body));
          verify.push(performance.now() - t1);
        }
        const t2 = performance.now();
        for (let j = 0; j < 100; j++) modulusFingerprint(key.n);
        fingerprint.push(((performance.now() - t2) / 100) * 1000);
        const t3 = performance.now();
        for (let j = 0; j < 5; j++) modPow(key.w + BigInt(j), key.p - 2n, key.p);
        power.push((performance.now() - t3) / 5);
      }
      rows.push({ bits, lowOnes, proofBytes, proveMs: median(prove), verifyMs: median(verify), fingerprintUs: median(fingerprint), modPowHalfMs: median(power) });
    }
  }
  return rows;
}

/** The table: "= modPow(p)s" is proving time in plain exponentiations modulo p (two square roots per challenge is about 2 m). */
export function formatProofBench(rows: ProofRow[]): string {
  const lines = ['bits  key form          proof bytes  prove ms  = modPow(p)s  verify ms  fingerprint us (added per query)'];
  for (const r of rows) {
    lines.push(
      `${String(r.bits).padEnd(5)} ${(r.lowOnes ? 'low half ones' : 'unconstrained').padEnd(16)} ${r.proofBytes.toLocaleString('en-GB').padStart(11)}  ${r.proveMs.toFixed(0).padStart(8)}  ${(r.proveMs / r.modPowHalfMs).toFixed(0).padStart(11)}  ${r.verifyMs.toFixed(1).padStart(9)}  ${r.fingerprintUs.toFixed(1).padStart(8)}`,
    );
  }
  return lines.join('\n');
}
