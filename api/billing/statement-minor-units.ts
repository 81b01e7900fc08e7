/**
 * Statement amounts in a currency's minor unit (ISO 4217, table A.1, column "Minor unit"; the
 * exceptions below from memory). Money is kept as integer micro-units (money.ts); a payable
 * amount has the currency's own number of decimals: 2 for EUR and USD, 0 for JPY, 3 for KWD.
 */

/** Active codes whose minor unit is not 2. Every other active ISO 4217 code has 2. */
const DECIMALS_OTHER_THAN_TWO: Readonly<Record<string, number>> = {
  BIF: 0, CLP: 0, DJF: 0, GNF: 0, ISK: 0, JPY: 0, KMF: 0, KRW: 0, PYG: 0, RWF: 0, UGX: 0, UYI: 0, VND: 0, VUV: 0, XAF: 0, XOF: 0, XPF: 0,
  BHD: 3, IQD: 3, JOD: 3, KWD: 3, LYD: 3, OMR: 3, TND: 3,
  CLF: 4, UYW: 4,
};

/** Codes ISO 4217 lists with no minor unit ("N.A."): metals, units of account, test and "no currency". */
const NO_MINOR_UNIT = new Set(['XAG', 'XAU', 'XBA', 'XBB', 'XBC', 'XBD', 'XDR', 'XPD', 'XPT', 'XSU', 'XTS', 'XUA', 'XXX']);

const MICROS_DECIMALS = 6;

/** Decimals of `currency`'s minor unit; throws for codes that have none (nothing can be billed in them). */
export function minorUnitDecimals(currency: string): number {
  if (NO_MINOR_UNIT.has(currency)) throw new RangeError(`${currency} has no minor unit in ISO 4217: bill in a currency such as EUR`);
  return DECIMALS_OTHER_THAN_TWO[currency] ?? 2;
}

/**
 * Micro-units rounded half up (away from zero on the magnitude) to whole minor units:
 * 1_234_500 micro-units of EUR (1.2345) are 123 cents, 1_235_000 (1.235) are 124.
 */
export function microsToMinorUnits(micros: number, decimals: number): number {
  if (!Number.isSafeInteger(micros)) throw new RangeError(`microsToMinorUnits: expected whole micro-units, got ${micros}`);
  if (!Number.isInteger(decimals) || decimals < 0 || decimals > MICROS_DECIMALS) throw new RangeError(`microsToMinorUnits: expected 0-6 decimals, got ${decimals}`);
  // BigInt: twice a large safe integer is past exact Number arithmetic.
  const step = 10n ** BigInt(MICROS_DECIMALS - decimals);
  const magnitude = Number((BigInt(Math.abs(micros)) * 2n + step) / (2n * step));
  return micros < 0 ? -magnitude : magnitude;
}

/** Whole minor units as the amount a person reads: 123 cents as "1.23", 5 yen as "5". */
export function formatMinorUnits(minor: number, decimals: number): string {
  const sign = minor < 0 ? '-' : '';
  const digits = String(Math.abs(minor)).padStart(decimals + 1, '0');
  return decimals === 0 ? `${sign}${digits}` : `${sign}${digits.slice(0, -decimals)}.${digits.slice(-decimals)}`;
}

/** An exact price in micro-units as a decimal of the currency, trailing zeros dropped: 1500 -> "0.0015". */
export function formatPriceMicros(micros: number): string {
  const text = formatMinorUnits(micros, MICROS_DECIMALS);
  return text.includes('.') ? text.replace(/\.?0+$/, '') : text;
}
