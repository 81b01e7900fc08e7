import { existsSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { keyPairFromJson, keyPairToJson } from '../../core/pir/key-json.ts';
import { decodeModulusProof } from '../../core/pir/wire.ts';
import type { ClientKeyStore, StoredClientKey } from '../client-key.ts';
import { writePrivateJson } from './dev-home.ts';

/**
 * The CLI is one client: its key, the key's proof and where it is registered are kept in
 * `<home>/client-key-<bits>.json` (mode 0600), so later queries skip making, proving and
 * registering a key until its lifetime ends. The key never leaves this machine; only the proof
 * (which holds the modulus, not its factors) is sent. A file that does not read back whole
 * (damaged, a composite p or q, or from before keys had proofs) is refused with a line on
 * `warn` naming the file and the reason, and replaced by a new key: it holds no data worth keeping.
 */
export function diskKeyStore(home: string, warn: (line: string) => void = (line) => process.stderr.write(line + '\n')): ClientKeyStore {
  const path = (bits: number) => join(home, `client-key-${bits}.json`);
  return {
    async load(bits) {
      if (!existsSync(path(bits))) return null;
      try {
        return fromJson(JSON.parse(readFileSync(path(bits), 'utf8')));
      } catch (err) {
        warn(`nearveil: the client key in ${path(bits)} is refused (${err instanceof Error ? err.message : String(err)}); a new key is made and registered in its place`);
        return null;
      }
    },
    async save(entry) {
      writePrivateJson(path(entry.key.modulusBits), toJson(entry));
    },
    async remove(bits) {
      rmSync(path(bits), { force: true });
    },
  };
}

function toJson(entry: StoredClientKey) {
  return {
    format: 2,
    key: keyPairToJson(entry.key),
    createdAt: new Date(entry.createdAt).toISOString(),
    queries: entry.queries,
    proof: Buffer.from(entry.proof).toString('base64'),
    registrations: Object.fromEntries(Object.entries(entry.registrations).map(([server, until]) => [server, new Date(until).toISOString()])),
  };
}

function fromJson(json: ReturnType<typeof toJson>): StoredClientKey {
  if (json.format !== 2) throw new RangeError(`client key: expected format 2, got ${String(json.format)}`);
  const key = keyPairFromJson(json.key);
  const proof = new Uint8Array(Buffer.from(json.proof, 'base64'));
  if (decodeModulusProof(proof).n !== key.n) throw new RangeError('client key: the stored proof is for another modulus');
  const createdAt = Date.parse(json.createdAt);
  if (!Number.isFinite(createdAt) || !Number.isSafeInteger(json.queries) || json.queries < 0) throw new RangeError('client key: bad createdAt or queries');
  const registrations = Object.fromEntries(Object.entries(json.registrations ?? {}).map(([server, until]) => [server, Date.parse(until)]));
  return { key, createdAt, queries: json.queries, proof, registrations };
}
