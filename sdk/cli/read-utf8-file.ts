import { readFileSync, statSync } from 'node:fs';
import { InputError } from '../../core/errors/input-error.ts';
import { decodeUtf8File } from '../../core/text/utf8-file.ts';
import { CliError } from './cli-error.ts';

/**
 * Reads a site table file and checks that it is UTF-8 before anything is sent or built: bytes
 * that are not (a Latin-1 export, say) give one line naming the file, line and byte offset.
 */
export function readUtf8File(file: string): { bytes: Uint8Array<ArrayBuffer>; text: string } {
  let bytes: Uint8Array<ArrayBuffer>;
  try {
    if (!statSync(file).isFile()) throw new Error('not a file');
    bytes = new Uint8Array(readFileSync(file));
  } catch (err) {
    throw new CliError(`cannot read ${file}: ${err instanceof Error ? err.message : String(err)}`);
  }
  try {
    return { bytes, text: decodeUtf8File(bytes) };
  } catch (err) {
    if (err instanceof InputError) throw new CliError(`${file}: ${err.message.replace(/^file: /, '')}`);
    throw err;
  }
}
