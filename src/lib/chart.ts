import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';
import { timeAxis } from './chart-axes';

/** A theme colour from its CSS variable (the fallback outside a browser or when unset). */
export function cssVar(name: string, fallback: string): string {
  if (typeof window === 'undefined') return fallback;
  return getComputedStyle(document.documentElement).getPropertyValue(name).trim() || fallback;
}

/** The colours the trace charts draw with, read from the current theme. */
export function traceColours() {
  return {
    dp: cssVar('--sp-accent', '#2b6a73'),
    ma: cssVar('--sp-state-approaching', '#5a5bc2'),
    grid: cssVar('--sp-line', '#dde1db'),
    ink: cssVar('--sp-ink-muted', '#4b5854'),
    band: cssVar('--sp-state-settling', '#b7861a'),
    hold: cssVar('--sp-state-holding', '#1b8796'),
  };
}
export type TraceColours = ReturnType<typeof traceColours>;

/** Time along x, applied DP on the left axis (in `unitLabel`), loop current on the right; sizes in px. */
export function traceAxes(c: TraceColours, unitLabel: string, sizes: { dp: number; ma: number }): uPlot.Axis[] {
  return [
    { stroke: c.ink, grid: { stroke: c.grid, width: 1 }, ticks: { stroke: c.grid }, ...timeAxis() },
    { scale: 'dp', label: unitLabel, stroke: c.dp, grid: { stroke: c.grid, width: 1 }, ticks: { stroke: c.grid }, size: sizes.dp },
    { scale: 'ma', side: 1, label: 'mA', stroke: c.ma, grid: { show: false }, ticks: { stroke: c.grid }, size: sizes.ma },
  ];
}

/** The x series, then applied DP and loop current as lines `width` px wide. */
export function traceSeries(c: TraceColours, width: number): uPlot.Series[] {
  return [
    {},
    { label: 'Applied DP', scale: 'dp', stroke: c.dp, width, spanGaps: true, points: { show: false } },
    { label: 'Loop current', scale: 'ma', stroke: c.ma, width, spanGaps: true, points: { show: false } },
  ];
}

/**
 * Draws a uPlot chart into `el` at the host's width (`fallbackWidth` before layout) and keeps it
 * at that width as the host resizes; `destroy` undoes both.
 */
export function mountChart(el: HTMLElement, opts: Omit<uPlot.Options, 'width'> & { height: number }, data: uPlot.AlignedData, fallbackWidth: number) {
  const plot = new uPlot({ ...opts, width: el.clientWidth || fallbackWidth }, data, el);
  const ro = new ResizeObserver(() => plot.setSize({ width: el.clientWidth, height: opts.height }));
  ro.observe(el);
  return {
    plot,
    destroy: () => {
      ro.disconnect();
      plot.destroy();
    },
  };
}

/** Runs `draw` on the chart's canvas clipped to the plotting area, restoring the context after. */
export function drawClipped(u: uPlot, draw: (ctx: CanvasRenderingContext2D) => void): void {
  const ctx = u.ctx;
  const { left, top, width, height } = u.bbox;
  ctx.save();
  ctx.beginPath();
  ctx.rect(left, top, width, height);
  ctx.clip();
  draw(ctx);
  ctx.restore();
}

/** Shades the band `lo`…`hi` of the DP scale across the whole plot (a point's capture window). */
export function shadeDpBand(u: uPlot, lo: number, hi: number, colour: string, alpha: number): void {
  const ctx = u.ctx;
  const yHi = u.valToPos(hi, 'dp', true);
  const yLo = u.valToPos(lo, 'dp', true);
  ctx.fillStyle = colour;
  ctx.globalAlpha = alpha;
  ctx.fillRect(u.bbox.left, Math.min(yHi, yLo), u.bbox.width, Math.max(2, Math.abs(yLo - yHi)));
  ctx.globalAlpha = 1;
}

/** Shades the stretch of time between canvas x positions `x0` and `x1` (a hold). */
export function shadeSpan(u: uPlot, x0: number, x1: number, colour: string, alpha: number): void {
  const ctx = u.ctx;
  ctx.fillStyle = colour;
  ctx.globalAlpha = alpha;
  ctx.fillRect(x0, u.bbox.top, Math.max(1, x1 - x0), u.bbox.height);
  ctx.globalAlpha = 1;
}
