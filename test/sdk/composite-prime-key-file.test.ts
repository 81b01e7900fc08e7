import { checkPrimeSync } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { keyPairFromJson } from '../../core/pir/key-json.ts';
import { encodeModulusProof } from '../../core/pir/wire.ts';
import { diskKeyStore } from '../../sdk/cli/key-store.ts';
import { seededRandom } from '../../scripts/demo/seeded-random.ts';
import { eulerSymbol } from '../core/pir/residuosity-reference.ts';

const SEED = 20261203;
const hex = (x: bigint) => x.toString(16);

/** The first prime (node:crypto checkPrimeSync, OpenSSL) at or after a seeded odd number of `bits` bits, top two bits set. */
function seededPrime(bits: number, random: () => number): bigint {
  let x = 3n;
  for (let i = 2; i < bits; i++) x = (x << 1n) | (random() < 0.5 ? 0n : 1n);
  x |= 1n;
  while (!checkPrimeSync(x)) x += 2n;
  return x;
}

/**
 * A stored key (format 1) with n = p*q of 2048 bits and w of Jacobi symbol -1 modulo p and q,
 * where `composite` names the factor built as a product of two 512-bit primes. The symbols come
 * from Euler's criterion by jsbn (residuosity-reference.ts), per prime factor.
 */
const made = new Map<string, ReturnType<typeof makeStoredKey>>();
const storedKey = (composite: 'p' | 'q' | 'neither') => made.get(composite) ?? made.set(composite, makeStoredKey(composite)).get(composite)!;

function makeStoredKey(composite: 'p' | 'q' | 'neither') {
  const random = seededRandom(SEED);
  const factors = (name: 'p' | 'q') => (composite === name ? [seededPrime(512, random), seededPrime(512, random)] : [seededPrime(1024, random)]);
  const pf = factors('p');
  const qf = factors('q');
  const symbol = (w: bigint, primes: bigint[]) => primes.reduce((s, f) => s * eulerSymbol(w, f), 1);
  let w = 2n;
  while (symbol(w, pf) !== -1 || symbol(w, qf) !== -1) w++;
  const p = pf.reduce((a, b) => a * b);
  const q = qf.reduce((a, b) => a * b);
  expect((p * q).toString(2)).toHaveLength(2048);
  return { format: 1 as const, modulusBits: 2048, n: hex(p * q), p: hex(p), q: hex(q), w: hex(w) };
}

// On a shared 2-core machine the slowest test measured 2 s; the limit is about twice that.
describe('a stored client key whose p or q is composite is refused', { timeout: 5_000 }, () => {
  it('keyPairFromJson accepts the construction with two primes and refuses it with a composite p or q, naming it', () => {
    expect(keyPairFromJson(storedKey('neither')).modulusBits, `seed ${SEED}`).toBe(2048);
    expect(() => keyPairFromJson(storedKey('p')), `seed ${SEED}`).toThrow('keyPairFromJson: expected p to be prime, got a composite number');
    expect(() => keyPairFromJson(storedKey('q')), `seed ${SEED}`).toThrow('keyPairFromJson: expected q to be prime, got a composite number');
  });

  describe("the CLI's key file", () => {
    const home = mkdtempSync(join(tmpdir(), 'nearveil-key-file-'));
    afterAll(() => rmSync(home, { recursive: true, force: true }));
    const path = join(home, 'client-key-2048.json');

    /** A key file as the CLI writes it (format 2), with a proof for the same modulus so only the key can be refused. */
    function writeKeyFile(key: ReturnType<typeof storedKey>) {
      const n = BigInt('0x' + key.n);
      const proof = encodeModulusProof({ n, c: BigInt('0x' + key.w), d: 1n, roots: [1n] });
      const file = { format: 2, key, createdAt: new Date().toISOString(), queries: 0, proof: Buffer.from(proof).toString('base64'), registrations: {} };
      writeFileSync(path, JSON.stringify(file));
      return JSON.stringify(file);
    }

    it('loads a key file of two primes without a word', async () => {
      const warnings: string[] = [];
      writeKeyFile(storedKey('neither'));
      const loaded = await diskKeyStore(home, (l) => warnings.push(l)).load(2048);
      expect(loaded?.key.n).toBe(BigInt('0x' + storedKey('neither').n));
      expect(warnings).toEqual([]);
    });

    it.each(['p', 'q'] as const)('refuses a key file with a composite %s, says why and where, and leaves the file as it was', async (name) => {
      const warnings: string[] = [];
      const text = writeKeyFile(storedKey(name));
      expect(await diskKeyStore(home, (l) => warnings.push(l)).load(2048)).toBeNull();
      expect(warnings).toEqual([`nearveil: the client key in ${path} is refused (keyPairFromJson: expected ${name} to be prime, got a composite number); a new key is made and registered in its place`]);
      expect(readFileSync(path, 'utf8')).toBe(text);
    });
  });
});
