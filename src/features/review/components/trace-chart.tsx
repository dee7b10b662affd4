import { useEffect, useRef } from 'react';
import uPlot from 'uplot';
import type { ReviewTrace } from '../../../../shared/schemas/trace';
import type { Run } from '../../../../shared/schemas/runs';
import { Button } from '../../../components/ui/button';
import { ChartKey } from '../../../components/ui/chart-key';
import { cssVar, drawClipped, mountChart, shadeDpBand, shadeSpan, traceAxes, traceColours, traceSeries } from '../../../lib/chart';
import { useThemeStore } from '../../../lib/theme';
import type { TraceWindow } from '../api/get-trace';

const FLAG_VARS: Record<string, string> = {
  leak: '--sp-flag-leak',
  overshoot: '--sp-flag-overshoot',
  unstable: '--sp-flag-unstable',
  manual: '--sp-flag-manual',
};

export interface TraceChartProps {
  /** The run's points (holds, captures, flags); the trace is drawn before it arrives. */
  run: Run | null;
  trace: ReviewTrace | undefined;
  unitLabel: string;
  /** Selected point: its target band and hold are emphasised. */
  selectedIndex: number | null;
  /** The window shown; null is the whole run. */
  view: TraceWindow | null;
  onViewChange: (w: TraceWindow | null) => void;
  loading?: boolean;
  height?: number;
}

/** uPlot data from a review trace: x in seconds, then DP, current, and the envelope bounds. */
function toData(t: ReviewTrace): uPlot.AlignedData {
  const xs = t.x.map((x) => (t.t0 + x) / 1000);
  const empty = () => t.x.map(() => null);
  return [xs, t.dp.v, t.ma.v, t.dp.lo ?? empty(), t.dp.hi ?? empty(), t.ma.lo ?? empty(), t.ma.hi ?? empty()] as uPlot.AlignedData;
}

/**
 * The raw trace of a run for review: applied DP (left axis) and loop current (right axis) with,
 * for every captured point, the hold window shaded, the captured means drawn across it, and its
 * flags and warnings marked. Drag across the chart to zoom; the buttons zoom out and pan. A long
 * window is drawn as a min/mean/max envelope; a short one shows every sample as received.
 * Sets `data-drawn` on its host once the trace is drawn (for the review benchmark).
 */
export function TraceChart({ run, trace, unitLabel, selectedIndex, view, onViewChange, loading = false, height = 320 }: TraceChartProps) {
  const host = useRef<HTMLDivElement>(null);
  const plotRef = useRef<uPlot | null>(null);
  const theme = useThemeStore((s) => s.theme);
  const live = useRef({ run, selectedIndex, onViewChange, trace });
  useEffect(() => {
    live.current = { run, selectedIndex, onViewChange, trace };
  });

  useEffect(() => {
    const el = host.current;
    if (!el) return;
    const c = {
      ...traceColours(),
      captured: cssVar('--sp-state-captured', '#2e8753'),
      warn: cssVar('--sp-warn', '#94600f'),
      flags: Object.fromEntries(Object.entries(FLAG_VARS).map(([k, v]) => [k, cssVar(v, '#c0356a')])),
    };
    const dpr = () => (typeof devicePixelRatio === 'number' ? devicePixelRatio : 1);

    const overlay = (u: uPlot) => {
      const { run: r, selectedIndex: sel } = live.current;
      const { left, top, width } = u.bbox;
      drawClipped(u, (ctx) => {
        ctx.font = `${11 * dpr()}px Inter, sans-serif`;
        for (const p of r?.points ?? []) {
          const cap = p.capture;
          if (!cap) continue;
          const x0 = u.valToPos(cap.startMs / 1000, 'x', true);
          const x1 = u.valToPos(cap.endMs / 1000, 'x', true);
          if (x1 < left || x0 > left + width) continue;
          const selected = p.index === sel;
          shadeSpan(u, x0, x1, c.hold, selected ? 0.22 : 0.1);
          // Captured means across the hold: DP on its axis, current on its own.
          ctx.lineWidth = 2 * dpr();
          ctx.setLineDash([]);
          for (const [val, scale, col] of [
            [cap.appliedDp, 'dp', c.dp],
            [cap.measuredMa, 'ma', c.ma],
          ] as const) {
            const y = u.valToPos(val, scale, true);
            ctx.strokeStyle = col;
            ctx.beginPath();
            ctx.moveTo(x0, y);
            ctx.lineTo(x1, y);
            ctx.stroke();
            ctx.fillStyle = c.captured;
            ctx.beginPath();
            ctx.arc(x1, y, 3 * dpr(), 0, Math.PI * 2);
            ctx.fill();
          }
          // Flags and warnings as labelled marks along the top of the hold.
          let ty = top + 4 * dpr();
          const label = (text: string, col: string) => {
            ctx.fillStyle = col;
            ctx.fillRect(x0, ty, 3 * dpr(), 12 * dpr());
            ctx.fillText(text, x0 + 5 * dpr(), ty + 10 * dpr());
            ty += 14 * dpr();
          };
          if (selected || x1 - x0 > 30 * dpr()) label(`#${p.index + 1}`, c.ink);
          for (const f of p.flags) label(f, c.flags[f] ?? c.warn);
          if (p.warning) label('warning', c.warn);
          if (selected) shadeDpBand(u, p.targetDp - p.window, p.targetDp + p.window, c.band, 0.16);
        }
      });
    };

    const opts = {
      height,
      legend: { show: false },
      cursor: { drag: { x: true, y: false, setScale: false }, points: { show: false } },
      select: { show: true, left: 0, top: 0, width: 0, height: 0 },
      scales: { x: { time: true }, dp: { auto: true, range: safeRange }, ma: { auto: true, range: safeRange } },
      axes: traceAxes(c, unitLabel, { dp: 64, ma: 56 }),
      series: [
        ...traceSeries(c, 1.5),
        { label: 'DP min', scale: 'dp', stroke: 'transparent', spanGaps: true, points: { show: false } },
        { label: 'DP max', scale: 'dp', stroke: 'transparent', spanGaps: true, points: { show: false } },
        { label: 'mA min', scale: 'ma', stroke: 'transparent', spanGaps: true, points: { show: false } },
        { label: 'mA max', scale: 'ma', stroke: 'transparent', spanGaps: true, points: { show: false } },
      ],
      bands: [
        { series: [4, 3], fill: `${c.dp}33` },
        { series: [6, 5], fill: `${c.ma}33` },
      ],
      hooks: {
        draw: [
          (u) => {
            overlay(u);
            if (u.data[0].length > 0 && el.dataset.drawn !== 'true') {
              el.dataset.drawn = 'true';
              performance.mark('review-trace-drawn');
            }
          },
        ],
        setSelect: [
          (u) => {
            if (u.select.width < 4) return;
            const from = u.posToVal(u.select.left, 'x') * 1000;
            const to = u.posToVal(u.select.left + u.select.width, 'x') * 1000;
            u.setSelect({ left: 0, top: 0, width: 0, height: 0 }, false);
            live.current.onViewChange({ from, to });
          },
        ],
      },
    } satisfies Omit<uPlot.Options, 'width'>;
    const t = live.current.trace;
    const chart = mountChart(el, opts, t ? toData(t) : [[], [], [], [], [], [], []], 720);
    plotRef.current = chart.plot;
    return () => {
      chart.destroy();
      plotRef.current = null;
      delete el.dataset.drawn;
    };
  }, [height, unitLabel, theme]);

  useEffect(() => {
    const plot = plotRef.current;
    if (!plot || !trace) return;
    performance.mark('review-trace-data');
    plot.batch(() => {
      plot.setData(toData(trace), false);
      plot.setScale('x', { min: trace.from / 1000, max: trace.to / 1000 });
    });
  }, [trace]);

  useEffect(() => {
    plotRef.current?.redraw(false);
  }, [selectedIndex, run]);

  const span = trace?.span;
  const cur = view ?? (span && span.from !== null && span.to !== null ? { from: span.from, to: span.to } : null);
  const clamp = (w: TraceWindow): TraceWindow | null => {
    if (!span || span.from === null || span.to === null) return w;
    const width = Math.min(w.to - w.from, span.to - span.from);
    const from = Math.min(Math.max(w.from, span.from), span.to - width);
    return width >= span.to - span.from ? null : { from, to: from + width };
  };
  const pan = (dir: -1 | 1) => {
    if (!cur) return;
    const w = cur.to - cur.from;
    onViewChange(clamp({ from: cur.from + (dir * w) / 2, to: cur.to + (dir * w) / 2 }));
  };
  const zoomOut = () => {
    if (!cur) return;
    const w = cur.to - cur.from;
    onViewChange(clamp({ from: cur.from - w / 2, to: cur.to + w / 2 }));
  };
  const empty = trace && trace.total === 0 && trace.span.from === null;

  return (
    <figure className="m-0 flex flex-col gap-2">
      <div className="flex flex-wrap items-center justify-between gap-2 text-xs text-ink-muted">
        <span aria-live="polite">
          {trace ? (
            <>
              {trace.mode === 'raw' ? 'Every sample as received' : `Envelope (min–max per ${formatMs(trace.bucketMs ?? 0)})`} ·{' '}
              <span className="num">{trace.total.toLocaleString('en-GB')}</span> samples in view
              {loading && ' · loading…'}
            </>
          ) : (
            'Loading the trace…'
          )}
        </span>
        <div className="flex gap-1" role="group" aria-label="Trace view">
          <Button size="sm" variant="secondary" onClick={() => pan(-1)} disabled={!cur} aria-label="Pan earlier">
            ←
          </Button>
          <Button size="sm" variant="secondary" onClick={() => pan(1)} disabled={!cur} aria-label="Pan later">
            →
          </Button>
          <Button size="sm" variant="secondary" onClick={zoomOut} disabled={!cur}>
            Zoom out
          </Button>
          <Button size="sm" variant="secondary" onClick={() => onViewChange(null)} disabled={!view}>
            Whole run
          </Button>
        </div>
      </div>
      <div
        ref={host}
        className="w-full cursor-crosshair"
        data-testid="review-trace"
        data-mode={trace?.mode}
        role="img"
        aria-label={`Raw trace of applied DP (${unitLabel}) and loop current (mA); drag across to zoom`}
      />
      {empty && <p className="text-sm text-ink-muted">No raw samples are stored for this run.</p>}
      <figcaption className="flex flex-wrap gap-x-5 gap-y-1 text-xs text-ink-muted">
        <ChartKey swatch="bg-accent" label={`Applied DP (${unitLabel}, left)`} />
        <ChartKey swatch="bg-state-approaching" label="Loop current (mA, right)" />
        <ChartKey swatch="bg-state-holding/30" label="Hold window" />
        <ChartKey swatch="bg-state-captured" label="Captured means" />
        <ChartKey swatch="bg-flag-leak" label="Flags and warnings" />
      </figcaption>
    </figure>
  );
}

/** A y range that always has ticks: a window with no samples or a flat line still gets an axis. */
function safeRange(_u: uPlot, min: number | null, max: number | null): uPlot.Range.MinMax {
  if (min === null || max === null || !Number.isFinite(min) || !Number.isFinite(max)) return [0, 1];
  if (min === max) return [min - Math.max(Math.abs(min) * 0.001, 0.001), max + Math.max(Math.abs(max) * 0.001, 0.001)];
  return uPlot.rangeNum(min, max, 0.1, true);
}

function formatMs(ms: number): string {
  return ms >= 1000 ? `${(ms / 1000).toFixed(ms >= 10_000 ? 0 : 1)} s` : `${Math.round(ms)} ms`;
}
