import { decodeUtf8File } from '../../../core/text/utf8-file.ts';

/**
 * The text of a file the user imports, which must be UTF-8. Not Blob.text(): that turns bytes
 * that are not UTF-8 into U+FFFD without a word. Throws core's InputError naming line and byte offset.
 */
export async function importedFileText(file: Blob): Promise<string> {
  return decodeUtf8File(new Uint8Array(await file.arrayBuffer()));
}
