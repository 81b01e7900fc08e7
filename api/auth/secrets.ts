/** Credential secrets: 256 random bits, base64url, with a prefix telling the kind apart. */
export const SECRET_PREFIX = { admin: 'nva_', query: 'nvk_' } as const;

export function newSecret(kind: keyof typeof SECRET_PREFIX): string {
  const bytes = crypto.getRandomValues(new Uint8Array(32));
  return SECRET_PREFIX[kind] + base64UrlEncode(bytes);
}

export async function hashSecret(secret: string): Promise<string> {
  const digest = await crypto.subtle.digest('SHA-256', new TextEncoder().encode(secret));
  return hex(new Uint8Array(digest));
}

export function hex(bytes: Uint8Array): string {
  let out = '';
  for (const b of bytes) out += b.toString(16).padStart(2, '0');
  return out;
}

export function base64UrlEncode(bytes: Uint8Array): string {
  let bin = '';
  for (const b of bytes) bin += String.fromCharCode(b);
  return btoa(bin).replace(/\+/g, '-').replace(/\//g, '_').replace(/=+$/, '');
}

/** Decodes base64url (RFC 4648 section 5), padding optional; throws on other characters. */
export function base64UrlDecode(text: string): Uint8Array {
  if (!/^[A-Za-z0-9_-]*$/.test(text)) throw new TypeError('base64UrlDecode: expected base64url text');
  const bin = atob(text.replace(/-/g, '+').replace(/_/g, '/'));
  const out = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) out[i] = bin.charCodeAt(i);
  return out;
}
