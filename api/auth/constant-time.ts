/**
 * Compares two byte strings in time that depends only on their lengths, never on where they
 * differ (so a caller cannot learn a secret byte by byte from response times).
 */
export function constantTimeEqual(a: Uint8Array, b: Uint8Array): boolean {
  if (a.length !== b.length) return false;
  let diff = 0;
  for (let i = 0; i < a.length; i++) diff |= a[i]! ^ b[i]!;
  return diff === 0;
}

/** Same for text (compared as UTF-8 bytes). */
export function constantTimeEqualText(a: string, b: string): boolean {
  const encoder = new TextEncoder();
  return constantTimeEqual(encoder.encode(a), encoder.encode(b));
}
