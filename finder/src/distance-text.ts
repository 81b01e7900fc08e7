const KM = new Intl.NumberFormat('en', { minimumFractionDigits: 1, maximumFractionDigits: 1 });

/** A straight-line distance for people: whole metres under 1 km, else km with one decimal. */
export function distanceText(meters: number): string {
  if (!Number.isFinite(meters) || meters < 0) throw new RangeError(`distanceText: expected a distance >= 0, got ${meters}`);
  const rounded = Math.round(meters);
  // 999.6 m rounds to 1000: show it as km, as "1000 m" reads oddly.
  return rounded < 1000 ? `${rounded} m` : `${KM.format(meters / 1000)} km`;
}
