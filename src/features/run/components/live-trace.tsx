import { useEffect, useRef } from 'react';
import type uPlot from 'uplot';
import { ChartKey } from '../../../components/ui/chart-key';
import { drawClipped, mountChart, shadeDpBand, shadeSpan, traceAxes, traceColours, traceSeries } from '../../../lib/chart';
import { liveSamples, type LiveSampleStore } from '../../../stores/live-samples';
import { holdRemainingMs, useLiveRun } from '../../../stores/live-run';
import { useThemeStore } from '../../../lib/theme';

export interface TraceTarget {
  /** Target DP, instrument unit. */
  targetDp: number;
  /** Capture window half-width, instrument unit. */
  window: number;
  expectedMa: number;
}

export interface LiveTraceProps {
  /** Seconds of history shown. Default 60 s. */
  windowSeconds?: number;
  unitLabel: string;
  /** Converts a pressure sample to the instrument unit (identity when the units match). */
  toInstrumentUnit?: (v: number) => number;
  target: TraceTarget | null;
  /** Run whose hold is shaded. */
  runId: string;
  pointIndex: number | null;
  store?: LiveSampleStore;
  height?: number;
}

/**
 * Live trace of both channels (applied DP on the left axis, loop current on the right) over a
 * bounded window, with the target, the capture window band and the hold shaded. Redrawn from the
 * sample store at most once per animation frame, and only when new samples arrived.
 */
export function LiveTrace({ windowSeconds = 60, unitLabel, toInstrumentUnit, target, runId, pointIndex, store = liveSamples, height = 260 }: LiveTraceProps) {
  const host = useRef<HTMLDivElement>(null);
  // Colours come from the theme's CSS variables: rebuild the plot when the theme changes.
  const theme = useThemeStore((s) => s.theme);
  const props = useRef({ target, runId, pointIndex, toInstrumentUnit });
  useEffect(() => {
    props.current = { target, runId, pointIndex, toInstrumentUnit };
  });

  useEffect(() => {
    const el = host.current;
    if (!el) return;
    const colors = traceColours();
    const buf = { pt: [] as number[], pv: [] as (number | null)[], ct: [] as number[], cv: [] as (number | null)[] };
    let lastLatest = 0;

    const drawOverlay = (u: uPlot) => {
      const { target: tg, runId: rid, pointIndex: idx } = props.current;
      const { left, width } = u.bbox;
      drawClipped(u, (ctx) => {
        const hold = useLiveRun.getState().hold;
        if (hold && hold.runId === rid && hold.index === idx && lastLatest > 0) {
          const elapsed = hold.requiredMs - holdRemainingMs(hold, Date.now());
          const x0 = u.valToPos((lastLatest - elapsed) / 1000, 'x', true);
          const x1 = u.valToPos(lastLatest / 1000, 'x', true);
          shadeSpan(u, x0, x1, colors.hold, 0.14);
        }
        if (tg) {
          shadeDpBand(u, tg.targetDp - tg.window, tg.targetDp + tg.window, colors.band, 0.18);
          const y = u.valToPos(tg.targetDp, 'dp', true);
          ctx.strokeStyle = colors.band;
          ctx.lineWidth = 1.5 * devicePixelRatio;
          ctx.setLineDash([6 * devicePixelRatio, 4 * devicePixelRatio]);
          ctx.beginPath();
          ctx.moveTo(left, y);
          ctx.lineTo(left + width, y);
          ctx.stroke();
        }
      });
    };

    const opts = {
      height,
      legend: { show: false },
      cursor: { show: false },
      scales: {
        x: { time: true },
        // Always include the target and its window, so the technician sees where to go.
        dp: {
          auto: true,
          range: (_u, min, max) => {
            const tg = props.current.target;
            let lo = Number.isFinite(min) ? min : (tg?.targetDp ?? 0);
            let hi = Number.isFinite(max) ? max : (tg?.targetDp ?? 1);
            if (tg) {
              lo = Math.min(lo, tg.targetDp - 2 * tg.window);
              hi = Math.max(hi, tg.targetDp + 2 * tg.window);
            }
            const pad = Math.max((hi - lo) * 0.06, 1e-6);
            return [lo - pad, hi + pad];
          },
        },
        ma: { auto: false, range: [3.5, 20.5] },
      },
      axes: traceAxes(colors, unitLabel, { dp: 60, ma: 50 }),
      series: traceSeries(colors, 2),
      hooks: { draw: [drawOverlay] },
    } satisfies Omit<uPlot.Options, 'width'>;
    const chart = mountChart(el, opts, [[], [], []], 600);
    const plot = chart.plot;

    // Merge the two channels onto one time axis (uPlot wants aligned series), nulls between.
    const redraw = () => {
      const latest = Math.max(store.rings.pressure.latest()?.wallMs ?? 0, store.rings.current.latest()?.wallMs ?? 0);
      if (latest === 0) return;
      lastLatest = latest;
      const from = latest - windowSeconds * 1000;
      store.rings.pressure.copySince(from, { t: buf.pt, v: buf.pv });
      store.rings.current.copySince(from, { t: buf.ct, v: buf.cv });
      const conv = props.current.toInstrumentUnit;
      const xs: number[] = [];
      const dp: (number | null)[] = [];
      const ma: (number | null)[] = [];
      let i = 0;
      let j = 0;
      while (i < buf.pt.length || j < buf.ct.length) {
        const tp = i < buf.pt.length ? buf.pt[i]! : Infinity;
        const tc = j < buf.ct.length ? buf.ct[j]! : Infinity;
        if (tp <= tc) {
          const v = buf.pv[i]!;
          xs.push(tp / 1000);
          dp.push(v === null ? null : conv ? conv(v) : v);
          ma.push(tp === tc ? buf.cv[j++]! : null);
          i++;
        } else {
          xs.push(tc / 1000);
          dp.push(null);
          ma.push(buf.cv[j]!);
          j++;
        }
      }
      plot.batch(() => {
        plot.setData([xs, dp, ma], false);
        plot.setScale('x', { min: from / 1000, max: latest / 1000 });
      });
    };

    let frame = 0;
    const schedule = () => {
      if (frame) return;
      frame = requestAnimationFrame(() => {
        frame = 0;
        redraw();
      });
    };
    const unsubscribe = store.subscribe(schedule);
    // The hold shading grows between samples too.
    const unsubscribeRun = useLiveRun.subscribe(schedule);
    schedule();
    return () => {
      unsubscribe();
      unsubscribeRun();
      if (frame) cancelAnimationFrame(frame);
      chart.destroy();
    };
  }, [store, windowSeconds, unitLabel, height, theme]);

  return (
    <figure className="m-0">
      <div ref={host} className="w-full" data-testid="live-trace" role="img" aria-label={`Live trace of applied DP (${unitLabel}) and loop current (mA), last ${windowSeconds} s`} />
      <figcaption className="mt-2 flex flex-wrap gap-x-5 gap-y-1 text-xs text-ink-muted">
        <ChartKey swatch="bg-accent" label={`Applied DP (${unitLabel}, left)`} />
        <ChartKey swatch="bg-state-approaching" label="Loop current (mA, right)" />
        <ChartKey swatch="bg-state-settling/40 border border-dashed border-state-settling" label="Target and capture window" />
        <ChartKey swatch="bg-state-holding/25" label="Hold" />
      </figcaption>
    </figure>
  );
}
