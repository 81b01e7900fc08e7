/** A sequential ramp for list lengths, pale (short lists) to deep (long lists); our own stops. */
const STOPS: Array<[number, [number, number, number]]> = [
  [0, [240, 246, 232]],
  [0.35, [170, 214, 160]],
  [0.65, [236, 178, 74]],
  [1, [176, 42, 48]],
];

export function heatColour(t: number, alpha = 0.55): string {
  const x = Math.max(0, Math.min(1, Number.isFinite(t) ? t : 0));
  let i = 1;
  while (i < STOPS.length - 1 && STOPS[i]![0] < x) i++;
  const [t0, c0] = STOPS[i - 1]!;
  const [t1, c1] = STOPS[i]!;
  const f = t1 === t0 ? 0 : (x - t0) / (t1 - t0);
  const mix = (k: number) => Math.round(c0[k]! + (c1[k]! - c0[k]!) * f);
  return `rgba(${mix(0)}, ${mix(1)}, ${mix(2)}, ${alpha})`;
}

export function rampCss(): string {
  return `linear-gradient(to right, ${STOPS.map(([t]) => `${heatColour(t, 1)} ${t * 100}%`).join(', ')})`;
}
