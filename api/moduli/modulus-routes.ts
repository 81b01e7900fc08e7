import { Hono } from 'hono';
import { browserPreflight } from '../auth/browser-keys.ts';
import { modulusFingerprint } from '../../core/modulus-proof/fingerprint.ts';
import { PROOF_CHALLENGES } from '../../core/modulus-proof/modulus-proof.ts';
import { verifyModulusProof } from '../../core/modulus-proof/verify-modulus.ts';
import { ALLOWED_MODULUS_BITS } from '../../core/pir/params.ts';
import { validateModulus } from '../../core/pir/validate.ts';
import { decodeModulusProof, proofByteLength } from '../../core/pir/wire.ts';
import { requireCredential } from '../auth/require-credential.ts';
import { database } from '../db/client.ts';
import type { AppBindings } from '../env.ts';
import { readLimitedBytes } from '../http/body-limit.ts';
import { countRejections } from '../metering/count-rejections.ts';
import { findProvenModulus, modulusLifetimeMs, rememberProvenModulus, type ProvenModulus } from './proven-moduli.ts';
import { countRefusedProof, registrationLimits, takeProofSlot } from './registration-limit.ts';

/** The largest proof body: a 3072-bit modulus with its challenges. */
const LARGEST_PROOF = Math.max(...ALLOWED_MODULUS_BITS.map((bits) => proofByteLength(bits, PROOF_CHALLENGES[bits])));

function modulusView(row: ProvenModulus) {
  return {
    sha256: row.modulusSha256,
    bits: row.modulusBits,
    registeredAt: new Date(row.registeredAt).toISOString(),
    expiresAt: new Date(row.expiresAt).toISOString(),
  };
}

/**
 * POST /v1/moduli: a client registers its modulus with a proof (core/modulus-proof) once per key;
 * from then on its queries are answered. A modulus already registered is acknowledged without
 * checking the proof again (200); a new one is checked under the key's hourly limits and kept
 * by fingerprint (201). A refused proof is counted among the key's refusals, never billed.
 */
export const modulusRoutes = new Hono<AppBindings>()
  .use('/moduli', browserPreflight())
  .use('/moduli', requireCredential('query'))
  .post('/moduli', countRejections(), async (c) => {
    const body = await readLimitedBytes(c.req.raw, LARGEST_PROOF);
    const proof = decodeModulusProof(body);
    const bits = validateModulus(proof.n);
    const fingerprint = modulusFingerprint(proof.n);
    const db = database(c.env);
    const now = new Date();
    const known = await findProvenModulus(db, fingerprint, now.getTime());
    if (known) return c.json({ modulus: modulusView(known) }, 200);
    await takeProofSlot(db, c.var.credentialId, now, registrationLimits(c.env));
    const started = performance.now();
    try {
      verifyModulusProof(proof);
    } catch (err) {
      await countRefusedProof(db, c.var.credentialId, now);
      throw err;
    }
    const checkMs = performance.now() - started;
    const row = { modulusSha256: fingerprint, modulusBits: bits, registeredAt: now.getTime(), expiresAt: now.getTime() + modulusLifetimeMs(c.env) };
    await rememberProvenModulus(db, row);
    return c.json({ modulus: modulusView(row) }, 201, { 'Server-Timing': `proof;dur=${checkMs.toFixed(1)};desc="modulus proof check"` });
  });
