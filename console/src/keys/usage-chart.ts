import type { UsageDay } from '../api/nearveil.ts';

/** Daily bars on a canvas: queries answered (and rejected, stacked in red), one bar per day of the month. */
export function drawUsageChart(canvas: HTMLCanvasElement, month: string, days: readonly UsageDay[]): void {
  const dpr = window.devicePixelRatio || 1;
  const w = canvas.clientWidth || 800;
  const hh = canvas.clientHeight || 220;
  canvas.width = Math.round(w * dpr);
  canvas.height = Math.round(hh * dpr);
  const g = canvas.getContext('2d')!;
  g.setTransform(dpr, 0, 0, dpr, 0, 0);
  g.clearRect(0, 0, w, hh);
  const [y, m] = month.split('-').map(Number) as [number, number];
  const dayCount = new Date(Date.UTC(y, m, 0)).getUTCDate();
  const byDay = new Map(days.map((d) => [Number(d.day.slice(8, 10)), d]));
  const top = Math.max(1, ...days.map((d) => d.queries + d.rejected));
  const left = 48;
  const bottom = hh - 24;
  const plotH = bottom - 16;
  const barW = (w - left - 12) / dayCount;
  g.font = '12px system-ui, sans-serif';
  g.fillStyle = '#5a6475';
  g.strokeStyle = '#d5d9e0';
  for (const f of [0, 0.5, 1]) {
    const yy = bottom - plotH * f;
    g.beginPath();
    g.moveTo(left, yy);
    g.lineTo(w - 8, yy);
    g.stroke();
    // Whole queries only: with a top of 1, the half line would read "1" (rounded) above the real 1.
    if (Number.isInteger(top * f)) g.fillText(String(top * f), 6, yy + 4);
  }
  for (let d = 1; d <= dayCount; d++) {
    const x = left + (d - 1) * barW + 1;
    const row = byDay.get(d);
    if (row) {
      const qh = (row.queries / top) * plotH;
      const rh = (row.rejected / top) * plotH;
      g.fillStyle = '#1f5fbf';
      g.fillRect(x, bottom - qh, Math.max(1, barW - 2), qh);
      g.fillStyle = '#b3261e';
      g.fillRect(x, bottom - qh - rh, Math.max(1, barW - 2), rh);
    }
    if (d === 1 || d % 5 === 0) {
      g.fillStyle = '#5a6475';
      g.fillText(String(d), x, hh - 8);
    }
  }
}
