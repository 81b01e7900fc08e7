/**
 * A 'geo' URI (RFC 5870) for a WGS-84 point: `geo:<lat>,<lon>`, each number with at most six
 * decimals (about 0.1 m) and no trailing zeros, no altitude and no parameters, so any maps app
 * that reads the scheme opens it. Per RFC 5870 section 3.4.2 (from memory) the longitude of a
 * pole SHOULD be written 0, and a coordinate is never written "-0".
 * Throws TypeError for a non-finite number, RangeError outside -90..90 or -180..180.
 */
export function geoUri(lat: number, lon: number): string {
  if (!Number.isFinite(lat) || !Number.isFinite(lon)) throw new TypeError(`geoUri: expected finite numbers, got ${lat}, ${lon}`);
  if (lat < -90 || lat > 90) throw new RangeError(`geoUri: expected latitude in -90..90, got ${lat}`);
  if (lon < -180 || lon > 180) throw new RangeError(`geoUri: expected longitude in -180..180, got ${lon}`);
  const latText = decimal(lat);
  const atPole = latText === '90' || latText === '-90';
  return `geo:${latText},${atPole ? '0' : decimal(lon)}`;
}

/** At most six decimals, trailing zeros dropped, "-0" written as "0". */
function decimal(value: number): string {
  const text = value.toFixed(6).replace(/\.?0+$/, '');
  return text === '-0' ? '0' : text;
}
