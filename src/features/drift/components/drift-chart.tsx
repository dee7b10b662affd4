import { useEffect, useRef } from 'react';
import type uPlot from 'uplot';
import type { DriftPoint } from '../../../../shared/schemas/drift';
import { cssVar, mountChart } from '../../../lib/chart';
import { dateAxis } from '../../../lib/chart-axes';
import { useThemeStore } from '../../../lib/theme';

/** A palette of our own for up to ten points (up and down series share a hue, down dashed). */
const HUES = [188, 28, 262, 140, 340, 210, 48, 300, 100, 0];

/** The colour of a point's series: one hue per nominal point, shared by its rising and falling series (the same in the chart and in its legend). */
function colourOf(points: DriftPoint[], p: DriftPoint, theme: string): string {
  const nominals = [...new Set(points.map((x) => x.nominalPct))].sort((a, b) => a - b);
  const hue = HUES[nominals.indexOf(p.nominalPct) % HUES.length]!;
  return `hsl(${hue} 55% ${theme === 'bench' ? 62 : 42}%)`;
}

/** A short line sample in a series' colour and dash, for the legend. */
function Swatch({ colour, dash }: { colour: string; dash?: string }) {
  return (
    <svg width="28" height="10" aria-hidden="true" className="shrink-0">
      <line x1="1" y1="5" x2="27" y2="5" stroke={colour} strokeWidth="2" strokeDasharray={dash} />
    </svg>
  );
}

/** One entry per series: every point (rising solid, falling dashed, each with its dotted prediction), the tolerance and the due date. */
export function DriftLegend({ points, tolerance, dueOn }: { points: DriftPoint[]; tolerance: number; dueOn: string | null }) {
  const theme = useThemeStore((s) => s.theme);
  const danger = 'var(--sp-danger, #b0383a)';
  return (
    <ul className="mt-3 flex flex-wrap gap-x-4 gap-y-1.5 text-xs text-ink" aria-label="Legend" data-testid="drift-legend">
      {points.map((p) => (
        <li key={p.key} className="flex items-center gap-1.5" data-testid="legend-item">
          <Swatch colour={colourOf(points, p, theme)} {...(p.direction === 'down' ? { dash: '5 4' } : {})} />
          <span className="num">
            {p.nominalPct} % {p.basis === 'flow' ? 'flow' : 'DP'} {p.direction === 'up' ? '↑ rising' : '↓ falling'}
          </span>
        </li>
      ))}
      <li className="flex items-center gap-1.5">
        <Swatch colour="currentColor" dash="2 4" />
        predicted to the next due date (each point’s colour)
      </li>
      <li className="flex items-center gap-1.5">
        <Swatch colour={danger} dash="8 4" />
        tolerance ±<span className="num">{tolerance}</span> % of span
      </li>
      {dueOn && (
        <li className="flex items-center gap-1.5">
          <Swatch colour="currentColor" dash="2 3" />
          next due <span className="num">{dueOn}</span> (vertical line)
        </li>
      )}
    </ul>
  );
}

/**
 * As-found error at each point over time (% of span) against the ± tolerance, with the predicted
 * error at the next due date drawn as a dotted extension of each point's line.
 */
export function DriftChart({ points, tolerance, dueOn, height = 300 }: { points: DriftPoint[]; tolerance: number; dueOn: string | null; height?: number }) {
  const host = useRef<HTMLDivElement>(null);
  const theme = useThemeStore((s) => s.theme);
  useEffect(() => {
    const el = host.current;
    if (!el || !points.length) return;
    const ink = cssVar('--sp-ink-muted', '#4b5854');
    const grid = cssVar('--sp-line', '#dde1db');
    const danger = cssVar('--sp-danger', '#b0383a');
    const dueSec = dueOn ? Date.parse(`${dueOn}T00:00:00Z`) / 1000 : null;
    const times = [...new Set(points.flatMap((p) => p.events.map((e) => e.atMs / 1000)))].sort((a, b) => a - b);
    if (dueSec && !times.includes(dueSec)) times.push(dueSec);
    const series: uPlot.Series[] = [{}];
    const data: (number | null)[][] = [times];
    points.forEach((p) => {
      const col = colourOf(points, p, theme);
      const byT = new Map(p.events.map((e) => [e.atMs / 1000, e.asFound]));
      data.push(times.map((t) => byT.get(t) ?? null));
      series.push({ label: `${p.nominalPct} % ${p.direction === 'up' ? '↑' : '↓'}`, stroke: col, width: 1.5, dash: p.direction === 'down' ? [5, 4] : undefined, spanGaps: true, points: { show: true, size: 5 } });
      // Prediction: from the last as-left to the next due date.
      const last = p.events.at(-1);
      data.push(times.map((t) => (last && t === last.atMs / 1000 ? last.asLeft : dueSec !== null && t === dueSec && p.predictedAtDue !== null ? p.predictedAtDue : null)));
      series.push({ label: `${p.nominalPct} % predicted`, stroke: col, width: 1, dash: [2, 4], spanGaps: true, points: { show: false } });
    });
    const opts = {
      height,
      legend: { show: false },
      scales: { x: { time: true }, y: { range: (_u, lo, hi) => [Math.min(lo, -tolerance * 1.2), Math.max(hi, tolerance * 1.2)] } },
      axes: [
        { stroke: ink, grid: { stroke: grid }, ...dateAxis() },
        { stroke: ink, grid: { stroke: grid }, label: 'As-found error, % of span', size: 60 },
      ],
      series,
      hooks: {
        draw: [
          (u) => {
            const ctx = u.ctx;
            ctx.save();
            ctx.strokeStyle = danger;
            ctx.lineWidth = 1.5 * devicePixelRatio;
            ctx.setLineDash([8, 4]);
            for (const v of [tolerance, -tolerance]) {
              const y = u.valToPos(v, 'y', true);
              ctx.beginPath();
              ctx.moveTo(u.bbox.left, y);
              ctx.lineTo(u.bbox.left + u.bbox.width, y);
              ctx.stroke();
            }
            if (dueSec) {
              const x = u.valToPos(dueSec, 'x', true);
              ctx.strokeStyle = ink;
              ctx.setLineDash([2, 3]);
              ctx.beginPath();
              ctx.moveTo(x, u.bbox.top);
              ctx.lineTo(x, u.bbox.top + u.bbox.height);
              ctx.stroke();
            }
            ctx.restore();
          },
        ],
      },
    } satisfies Omit<uPlot.Options, 'width'>;
    return mountChart(el, opts, data as uPlot.AlignedData, 700).destroy;
  }, [points, tolerance, dueOn, height, theme]);
  return (
    <figure className="m-0">
      <div ref={host} className="w-full" role="img" aria-label={`As-found error per point over time against ±${tolerance} % of span`} data-testid="drift-chart" />
      <figcaption>
        <DriftLegend points={points} tolerance={tolerance} dueOn={dueOn} />
      </figcaption>
    </figure>
  );
}
