import { useEffect, useRef } from 'react';
import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';
import { liveSamples, type LiveSampleStore } from '../../../stores/live-samples';
import { holdRemainingMs, useLiveRun } from '../../../stores/live-run';
import { useThemeStore } from '../../../lib/theme';
import { timeAxis } from '../../../lib/chart-axes';

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

function cssVar(name: string, fallback: string): string {
  if (typeof window === 'undefined') return fallback;
  const v = getComputedStyle(document.documentElement).getPropertyValue(name).trim();
  return v || fallback;
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
    const colors = {
      dp: cssVar('--sp-accent', '#2b6a73'),
      ma: cssVar('--sp-state-approaching', '#5a5bc2'),
      grid: cssVar('--sp-line', '#dde1db'),
      ink: cssVar('--sp-ink-muted', '#4b5854'),
      band: cssVar('--sp-state-settling', '#b7861a'),
      hold: cssVar('--sp-state-holding', '#1b8796'),
    };
    const buf = { pt: [] as number[], pv: [] as (number | null)[], ct: [] as number[], cv: [] as (number | null)[] };
    let lastLatest = 0;

    const drawOverlay = (u: uPlot) => {
      const { target: tg, runId: rid, pointIndex: idx } = props.current;
      const ctx = u.ctx;
      const { left, top, width, height: h } = u.bbox;
      ctx.save();
      ctx.beginPath();
      ctx.rect(left, top, width, h);
      ctx.clip();
      const hold = useLiveRun.getState().hold;
      if (hold && hold.runId === rid && hold.index === idx && lastLatest > 0) {
        const elapsed = hold.requiredMs - holdRemainingMs(hold, Date.now());
        const x0 = u.valToPos((lastLatest - elapsed) / 1000, 'x', true);
        const x1 = u.valToPos(lastLatest / 1000, 'x', true);
        ctx.fillStyle = colors.hold;
        ctx.globalAlpha = 0.14;
        ctx.fillRect(x0, top, Math.max(1, x1 - x0), h);
        ctx.globalAlpha = 1;
      }
      if (tg) {
        const yHi = u.valToPos(tg.targetDp + tg.window, 'dp', true);
        const yLo = u.valToPos(tg.targetDp - tg.window, 'dp', true);
        ctx.fillStyle = colors.band;
        ctx.globalAlpha = 0.18;
        ctx.fillRect(left, Math.min(yHi, yLo), width, Math.max(2, Math.abs(yLo - yHi)));
        ctx.globalAlpha = 1;
        const y = u.valToPos(tg.targetDp, 'dp', true);
        ctx.strokeStyle = colors.band;
        ctx.lineWidth = 1.5 * devicePixelRatio;
        ctx.setLineDash([6 * devicePixelRatio, 4 * devicePixelRatio]);
        ctx.beginPath();
        ctx.moveTo(left, y);
        ctx.lineTo(left + width, y);
        ctx.stroke();
      }
      ctx.restore();
    };

    const opts: uPlot.Options = {
      width: el.clientWidth || 600,
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
      axes: [
        { stroke: colors.ink, grid: { stroke: colors.grid, width: 1 }, ticks: { stroke: colors.grid }, ...timeAxis() },
        { scale: 'dp', label: unitLabel, stroke: colors.dp, grid: { stroke: colors.grid, width: 1 }, ticks: { stroke: colors.grid }, size: 60 },
        { scale: 'ma', side: 1, label: 'mA', stroke: colors.ma, grid: { show: false }, ticks: { stroke: colors.grid }, size: 50 },
      ],
      series: [
        {},
        { label: 'Applied DP', scale: 'dp', stroke: colors.dp, width: 2, spanGaps: true, points: { show: false } },
        { label: 'Loop current', scale: 'ma', stroke: colors.ma, width: 2, spanGaps: true, points: { show: false } },
      ],
      hooks: { draw: [drawOverlay] },
    };
    const plot = new uPlot(opts, [[], [], []], el);

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
    const ro = new ResizeObserver(() => plot.setSize({ width: el.clientWidth, height }));
    ro.observe(el);
    return () => {
      unsubscribe();
      unsubscribeRun();
      ro.disconnect();
      if (frame) cancelAnimationFrame(frame);
      plot.destroy();
    };
  }, [store, windowSeconds, unitLabel, height, theme]);

  return (
    <figure className="m-0">
      <div ref={host} className="w-full" data-testid="live-trace" role="img" aria-label={`Live trace of applied DP (${unitLabel}) and loop current (mA), last ${windowSeconds} s`} />
      <figcaption className="mt-2 flex flex-wrap gap-x-5 gap-y-1 text-xs text-ink-muted">
        <Legend swatch="bg-accent" label={`Applied DP (${unitLabel}, left)`} />
        <Legend swatch="bg-state-approaching" label="Loop current (mA, right)" />
        <Legend swatch="bg-state-settling/40 border border-dashed border-state-settling" label="Target and capture window" />
        <Legend swatch="bg-state-holding/25" label="Hold" />
      </figcaption>
    </figure>
  );
}

function Legend({ swatch, label }: { swatch: string; label: string }) {
  return (
    <span className="inline-flex items-center gap-1.5">
      <span aria-hidden="true" className={`inline-block h-2.5 w-4 rounded-sm ${swatch}`} />
      {label}
    </span>
  );
}
