import { useEffect, useRef } from 'react';
import type uPlot from 'uplot';
import { ChartKey } from '../../../components/ui/chart-key';
import { cssVar, mountChart } from '../../../lib/chart';
import { useThemeStore } from '../../../lib/theme';
import type { RunResults } from '../lib/results';

/**
 * Error per point against the tolerance and the acceptance limit (tolerance less the guard band):
 * as-found alone, or as-found and as-left together once both exist. Points are in run order.
 */
export function ErrorChart({ asFound, asLeft, tolerancePct, labels, rooted }: { asFound: RunResults | null; asLeft: RunResults | null; tolerancePct: number; labels: string[]; rooted: boolean }) {
  const host = useRef<HTMLDivElement>(null);
  const theme = useThemeStore((s) => s.theme);
  useEffect(() => {
    const el = host.current;
    if (!el || (!asFound && !asLeft)) return;
    const n = Math.max(asFound?.points.length ?? 0, asLeft?.points.length ?? 0);
    const xs = Array.from({ length: n }, (_, i) => i + 1);
    const errs = (r: RunResults | null) => xs.map((_, i) => r?.points.find((p) => p.index === i)?.errorPctSpan ?? null);
    const accept = (asFound ?? asLeft)!.points.map((p) => p.acceptanceLimitPctSpan ?? null);
    const maxAbs = Math.max(tolerancePct * 1.6, ...errs(asFound).concat(errs(asLeft)).map((v) => Math.abs(v ?? 0) * 1.15));
    const c = {
      found: cssVar('--sp-flag-overshoot', '#cc5f1c'),
      left: cssVar('--sp-state-captured', '#2e8753'),
      tol: cssVar('--sp-danger', '#b0383a'),
      guard: cssVar('--sp-warn', '#94600f'),
      grid: cssVar('--sp-line', '#dde1db'),
      ink: cssVar('--sp-ink-muted', '#4b5854'),
    };
    const series: uPlot.Series[] = [
      {},
      { label: '+tolerance', stroke: c.tol, width: 1.5, dash: [8, 4], points: { show: false } },
      { label: '−tolerance', stroke: c.tol, width: 1.5, dash: [8, 4], points: { show: false } },
      { label: '+acceptance', stroke: c.guard, width: 1, dash: [3, 3], points: { show: false }, spanGaps: true },
      { label: '−acceptance', stroke: c.guard, width: 1, dash: [3, 3], points: { show: false }, spanGaps: true },
      { label: 'As-found', stroke: c.found, width: 2, points: { show: true, size: 9, fill: c.found }, spanGaps: true },
    ];
    const data: uPlot.AlignedData = [
      xs,
      xs.map(() => tolerancePct),
      xs.map(() => -tolerancePct),
      xs.map((_, i) => accept[i] ?? null),
      xs.map((_, i) => (accept[i] === null || accept[i] === undefined ? null : -accept[i]!)),
      errs(asFound),
    ];
    if (asLeft) {
      series.push({ label: 'As-left', stroke: c.left, width: 2, points: { show: true, size: 9, fill: c.left }, spanGaps: true });
      data.push(errs(asLeft));
    }
    const chart = mountChart(
      el,
      {
        height: 240,
        legend: { show: false },
        cursor: { show: false },
        scales: { x: { time: false, range: [0.5, n + 0.5] }, y: { range: [-maxAbs, maxAbs] } },
        axes: [
          { stroke: c.ink, grid: { stroke: c.grid }, ticks: { stroke: c.grid }, values: (_u, vals) => vals.map((v) => (Number.isInteger(v) ? (labels[v - 1] ?? '') : '')), incrs: [1] },
          { stroke: c.ink, grid: { stroke: c.grid }, ticks: { stroke: c.grid }, label: rooted ? 'Error, % of flow span' : 'Error, % of span', size: 60 },
        ],
        series,
      },
      data,
      600,
    );
    return chart.destroy;
  }, [asFound, asLeft, tolerancePct, labels, rooted, theme]);

  return (
    <figure className="m-0 rounded-card border border-line bg-surface p-4 shadow-card">
      <div ref={host} data-testid="error-chart" role="img" aria-label="Error per point against tolerance and acceptance limits" />
      <figcaption className="mt-2 flex flex-wrap gap-x-5 gap-y-1 text-xs text-ink-muted">
        <ChartKey shape="w-5" swatch="border-t-2 border-dashed border-danger" label={`Tolerance ±${tolerancePct} %`} />
        <ChartKey shape="w-5" swatch="border-t-2 border-dotted border-warn" label="Acceptance limit (guard band)" />
        {asFound && <ChartKey shape="w-5" swatch="h-2.5 rounded-full bg-flag-overshoot" label="As-found" />}
        {asLeft && <ChartKey shape="w-5" swatch="h-2.5 rounded-full bg-state-captured" label="As-left" />}
      </figcaption>
    </figure>
  );
}
