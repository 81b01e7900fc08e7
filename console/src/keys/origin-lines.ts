/**
 * Origins typed one per line, checked in the page before anything is sent, with a message that
 * names the first bad line. The server checks again (api/auth/browser-keys.ts): an origin is an
 * exact serialized origin (RFC 6454), scheme, host and port only, compared as the browser sends it.
 */
export type OriginLines = { ok: true; origins: string[] } | { ok: false; problem: string };

/** The server takes at most this many origins per key or finder page. */
export const MAX_ORIGINS = 20;

export interface OriginLinesOptions {
  /** What the field is called in messages ("Origins", "Frame origins"). */
  field: string;
  /** May the list be empty (finder frame origins) or not (a web-page key)? */
  allowEmpty: boolean;
}

/** Blank lines are skipped, surrounding spaces trimmed, repeats kept once. */
export function readOriginLines(text: string, options: OriginLinesOptions): OriginLines {
  const origins: string[] = [];
  const lines = text.split(/\r?\n/);
  for (let i = 0; i < lines.length; i++) {
    const line = lines[i]!.trim();
    if (line === '') continue;
    const problem = originProblem(line);
    if (problem !== null) return { ok: false, problem: `${options.field}, line ${i + 1}: ${problem}` };
    if (!origins.includes(line)) origins.push(line);
  }
  if (origins.length === 0 && !options.allowEmpty) {
    return { ok: false, problem: `${options.field}: list at least one origin, such as https://clinics.example, one per line` };
  }
  if (origins.length > MAX_ORIGINS) return { ok: false, problem: `${options.field}: at most ${MAX_ORIGINS} origins, got ${origins.length}` };
  return { ok: true, origins };
}

/** Why `text` is not an exact origin, in words that say how to fix it; null when it is one. */
export function originProblem(text: string): string | null {
  let url: URL;
  try {
    url = new URL(text);
  } catch {
    return `"${text}" is not a web address; write the scheme and host, such as https://clinics.example`;
  }
  if (url.protocol !== 'https:' && url.protocol !== 'http:') return `"${text}" is not http:// or https://`;
  if (url.origin === text) return null;
  const fix = `write ${url.origin}`;
  if (url.username !== '' || url.password !== '') return `"${text}" has a user name or password; ${fix}`;
  if (url.search !== '' || url.hash !== '') return `"${text}" has a query or fragment; ${fix}`;
  if (url.pathname !== '/') return `"${text}" has a path (${url.pathname}); an origin is the scheme and host only: ${fix}`;
  if (text.endsWith('/')) return `"${text}" ends with a slash; ${fix}`;
  // Upper-case letters, a default port (:443 on https) or a spelled-out IP address: browsers send the short form.
  return `"${text}" is not written as browsers send it; ${fix}`;
}
