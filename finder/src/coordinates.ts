/** A point the person gave, in WGS-84 decimal degrees. */
export interface Point {
  lat: number;
  lon: number;
}

export type CoordinateCheck =
  | { ok: true; point: Point; /** The longitude, when it came from a "lat, lon" pair typed into the latitude field. */ splitLon?: string }
  | { ok: false; latError?: string; lonError?: string };

// Plain decimal degrees: an optional sign, digits, an optional point and decimals. No exponent, no hex.
const DECIMAL = /^[+-]?(\d+(\.\d*)?|\.\d+)$/;
// One number written with a decimal comma, such as 51,5.
const DECIMAL_COMMA = /^[+-]?\d+,\d+$/;
// Two numbers separated by a comma, semicolon or spaces: what a copied "lat, lon" pair looks like.
const PAIR = /^([+-]?[\d.]+)\s*[,;]\s*([+-]?[\d.]+)$|^([+-]?[\d.]+)\s+([+-]?[\d.]+)$/;

/**
 * Reads the latitude and longitude fields. A pair such as "-75.93, 60.52" pasted into the
 * latitude field (or a copied "geo:" URI), with the longitude field empty, is taken as latitude
 * then longitude.
 * Every refusal says what to type instead.
 */
export function checkCoordinates(latInput: string, lonInput: string): CoordinateCheck {
  const latText = normalise(latInput);
  const lonText = normalise(lonInput);
  if (lonText === '') {
    // A copied geo URI (RFC 5870): its parameters (";u=35") say nothing about the point.
    const bare = /^geo:/i.test(latText) ? latText.slice(4).replace(/;.*$/, '') : latText;
    const pair = PAIR.exec(bare);
    if (pair) {
      const second = pair[2] ?? pair[4]!;
      const checked = checkCoordinates(pair[1] ?? pair[3]!, second);
      return checked.ok ? { ...checked, splitLon: second } : checked;
    }
  } else if (PAIR.test(latText) && !DECIMAL_COMMA.test(latText)) {
    return { ok: false, latError: 'This field holds two numbers. Put the longitude in its own field, or empty the longitude field to use the pair.' };
  }
  const lat = readDegrees(latText, 'latitude', 90);
  const lon = readDegrees(lonText, 'longitude', 180);
  if (typeof lat === 'number' && typeof lon === 'number') return { ok: true, point: { lat, lon } };
  const out: CoordinateCheck = { ok: false };
  if (typeof lat === 'string') out.latError = lat;
  if (typeof lon === 'string') out.lonError = lon;
  // A longitude typed first is a common slip: say so when the numbers fit the other way round.
  const latNumber = Number(latText);
  const lonNumber = Number(lonText);
  if (typeof lat === 'string' && DECIMAL.test(latText) && Math.abs(latNumber) <= 180 && DECIMAL.test(lonText) && Math.abs(lonNumber) <= 90) {
    out.latError += ' Latitude and longitude may be swapped: latitude (north-south) comes first.';
  }
  return out;
}

/** The number, or the message that explains why the text is not one in range. */
function readDegrees(text: string, which: 'latitude' | 'longitude', limit: number): number | string {
  const field = which === 'latitude' ? 'Latitude' : 'Longitude';
  if (text === '') return `Enter the ${which}.`;
  if (/[°'"\u2032\u2033]|^[NSEWnsew]|[NSEWnsew]$/.test(text)) return `${field}: use decimal degrees with a minus sign for ${which === 'latitude' ? 'south' : 'west'}, such as ${which === 'latitude' ? '-75.93' : '60.52'}, not degrees and minutes or compass letters.`;
  if (DECIMAL_COMMA.test(text)) return `${field}: use a point as the decimal mark, such as ${text.replace(',', '.')}.`;
  if (!DECIMAL.test(text)) return `${field}: "${text}" is not a number. Use decimal degrees, such as ${which === 'latitude' ? '-75.93' : '60.52'}.`;
  const value = Number(text);
  if (Math.abs(value) > limit) return `${field} must be between -${limit} and ${limit} degrees; ${text} is outside that range.`;
  return value === 0 ? 0 : value; // never -0
}

/** Trims, and reads the typographic minus sign (U+2212) and dashes as "-", as copied text often has them. */
function normalise(text: string): string {
  return text.trim().replace(/[\u2212\u2012\u2013\u2014]/g, '-');
}
