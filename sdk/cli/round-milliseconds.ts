/** Every `...Ms` figure of a cost, nested ones too, to 0.1 ms: timers give more digits than they mean. */
export function roundMilliseconds<T>(value: T): T {
  if (Array.isArray(value) || value === null || typeof value !== 'object') return value;
  return Object.fromEntries(
    Object.entries(value).map(([k, v]) => [k, k.endsWith('Ms') && typeof v === 'number' ? Math.round(v * 10) / 10 : roundMilliseconds(v)]),
  ) as T;
}
