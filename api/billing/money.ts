/**
 * Money is held as integer micro-units (1/1,000,000) of one currency, so sums are exact. A price
 * per `per` units (per 10^9 bytes, per 10^6 multiplications) is rounded half up to a whole
 * micro-unit once per statement line, never per day, so a statement equals its daily counts summed.
 */
export function lineAmount(quantity: number, priceMicros: number, per = 1): number {
  for (const [name, v] of [['quantity', quantity], ['priceMicros', priceMicros], ['per', per]] as const) {
    if (!Number.isSafeInteger(v) || v < 0) throw new RangeError(`lineAmount: expected ${name} a whole number >= 0, got ${v}`);
  }
  if (per === 0) throw new RangeError('lineAmount: expected per >= 1, got 0');
  const divisor = BigInt(per);
  const amount = (BigInt(quantity) * BigInt(priceMicros) * 2n + divisor) / (2n * divisor);
  if (amount > BigInt(Number.MAX_SAFE_INTEGER)) throw new RangeError(`lineAmount: ${amount} micro-units is past exact arithmetic`);
  return Number(amount);
}

/** 1,234,567 micro-units as "1.234567" (for people; machines read the integer). */
export function formatMicros(micros: number): string {
  const sign = micros < 0 ? '-' : '';
  const abs = Math.abs(micros);
  return `${sign}${Math.floor(abs / 1_000_000)}.${String(abs % 1_000_000).padStart(6, '0')}`;
}
