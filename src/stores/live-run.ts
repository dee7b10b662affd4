/**
 * Live run state that changes faster than server state is refetched: the hold progress of the
 * current point, the warnings raised during it, and whether each bench device is connected.
 * Fed by the live stream; point states and captures themselves live in TanStack Query.
 */
import { create } from 'zustand';

export type WarningKind = 'leak' | 'overshoot' | 'unstable' | 'disconnect' | 'ne43' | 'clock' | 'overrange';

export interface LiveWarning {
  kind: WarningKind;
  runId: string;
  index: number;
  message: string;
  /** Leak rate, % of span per minute (leak only). */
  ratePctSpanPerMin: number | null;
  /** Client clock when received, ms. */
  receivedAt: number;
}

export interface HoldProgress {
  runId: string;
  index: number;
  elapsedMs: number;
  requiredMs: number;
  /** Client clock when received, ms (to count down smoothly between messages). */
  receivedAt: number;
}

export interface DeviceLink {
  connected: boolean;
  path: string | null;
  reason: string | null;
  at: number | null;
}

interface LiveRunState {
  hold: HoldProgress | null;
  /** Active warnings, newest last; at most one per kind and point. */
  warnings: LiveWarning[];
  devices: Record<'pressure' | 'current', DeviceLink | undefined>;
  pointChanged(p: { runId: string; index: number; state: string; hold: { elapsedMs: number; requiredMs: number } | null }, now?: number): void;
  warned(w: Omit<LiveWarning, 'receivedAt'>, now?: number): void;
  captured(runId: string, index: number): void;
  dismiss(kind: WarningKind, runId: string, index: number): void;
  device(device: 'pressure' | 'current', link: DeviceLink): void;
  reset(): void;
}

/** Warnings kept at most (older drop off). */
const MAX_WARNINGS = 20;

export const useLiveRun = create<LiveRunState>((set) => ({
  hold: null,
  warnings: [],
  devices: { pressure: undefined, current: undefined },
  pointChanged(p, now = Date.now()) {
    set((s) => {
      const hold = p.state === 'holding' && p.hold ? { runId: p.runId, index: p.index, ...p.hold, receivedAt: now } : s.hold && s.hold.runId === p.runId && s.hold.index === p.index ? null : s.hold;
      // A point that starts over (waiting/approaching) or is captured no longer carries the
      // transient warnings of its previous attempt; leak and overshoot stay until the hold restarts.
      let warnings = s.warnings;
      if (p.state === 'captured' || p.state === 'waiting') warnings = warnings.filter((w) => !(w.runId === p.runId && w.index === p.index) || w.kind === 'disconnect');
      if (p.state === 'holding') warnings = warnings.filter((w) => !(w.runId === p.runId && w.index === p.index && (w.kind === 'overshoot' || w.kind === 'unstable')));
      return { hold, warnings };
    });
  },
  warned(w, now = Date.now()) {
    set((s) => ({
      warnings: [...s.warnings.filter((x) => !(x.kind === w.kind && x.runId === w.runId && x.index === w.index)), { ...w, receivedAt: now }].slice(-MAX_WARNINGS),
      hold: w.kind === 'leak' || w.kind === 'disconnect' || w.kind === 'unstable' ? (s.hold && s.hold.runId === w.runId && s.hold.index === w.index ? null : s.hold) : s.hold,
    }));
  },
  captured(runId, index) {
    set((s) => ({
      hold: s.hold && s.hold.runId === runId && s.hold.index === index ? null : s.hold,
      warnings: s.warnings.filter((w) => !(w.runId === runId && w.index === index) || w.kind === 'disconnect'),
    }));
  },
  dismiss(kind, runId, index) {
    set((s) => ({ warnings: s.warnings.filter((w) => !(w.kind === kind && w.runId === runId && w.index === index)) }));
  },
  device(device, link) {
    set((s) => ({
      devices: { ...s.devices, [device]: link },
      warnings: link.connected ? s.warnings.filter((w) => w.kind !== 'disconnect') : s.warnings,
    }));
  },
  reset() {
    set({ hold: null, warnings: [], devices: { pressure: undefined, current: undefined } });
  },
}));

/** Remaining hold time, ms, at `now` (client clock), from the last progress message. */
export function holdRemainingMs(hold: HoldProgress, now: number): number {
  const elapsed = hold.elapsedMs + Math.max(0, now - hold.receivedAt);
  return Math.max(0, hold.requiredMs - elapsed);
}
