import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { keyPairFromJson, keyPairToJson } from '../../core/pir/key-json.ts';
import { generateKeyPair, type PirKeyPair } from '../../core/pir/keys.ts';
import { writePrivateJson } from './dev-home.ts';

/**
 * The CLI is one client: its key pair is generated on first use and kept (mode 0600) so later
 * queries skip key generation. The key never leaves this machine.
 */
export async function loadOrCreateKeyPair(home: string, modulusBits: number): Promise<PirKeyPair> {
  const path = join(home, `client-key-${modulusBits}.json`);
  if (existsSync(path)) {
    try {
      return keyPairFromJson(JSON.parse(readFileSync(path, 'utf8')));
    } catch {
      // A damaged key file is replaced: the key holds no data worth keeping.
    }
  }
  const key = await generateKeyPair({ modulusBits });
  writePrivateJson(path, keyPairToJson(key));
  return key;
}
