/** A whole number typed in a field, in a range, or a message naming the field. Empty gives `fallback`. */
export function readWholeNumber(text: string, field: string, min: number, max: number, fallback: number): { ok: true; value: number } | { ok: false; problem: string } {
  const trimmed = text.trim();
  if (trimmed === '') return { ok: true, value: fallback };
  const value = Number(trimmed);
  if (!/^\d+$/.test(trimmed) || !Number.isSafeInteger(value) || value < min || value > max) {
    return { ok: false, problem: `${field}: expected a whole number from ${min} to ${max}, got "${trimmed}"` };
  }
  return { ok: true, value };
}
