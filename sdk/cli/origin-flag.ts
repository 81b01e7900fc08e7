import { CliError } from './cli-error.ts';

/**
 * An origin flag's value, checked as the server will check it: an exact origin (RFC 6454
 * serialization), http or https, no path or trailing slash. Caught here so the message names the
 * flag and suggests the origin the user probably meant.
 */
export function originFlag(text: string, flag: string): string {
  let url: URL | undefined;
  try {
    url = new URL(text);
  } catch {
    url = undefined;
  }
  if (!url || (url.protocol !== 'https:' && url.protocol !== 'http:') || url.origin !== text) {
    const hint = url && url.origin !== 'null' ? `; did you mean ${url.origin}?` : '';
    throw new CliError(`${flag}: expected an exact origin such as https://finder.example (scheme and host, no path or trailing slash), got "${text}"${hint}`);
  }
  return text;
}
