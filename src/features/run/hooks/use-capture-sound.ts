import { useCallback, useEffect, useRef } from 'react';
import { create } from 'zustand';

/** localStorage key of the capture-sound preference. */
export const SOUND_STORAGE_KEY = 'stillpoint.capture-sound';

function readMuted(): boolean {
  try {
    return window.localStorage.getItem(SOUND_STORAGE_KEY) === 'off';
  } catch {
    return false;
  }
}

interface SoundPref {
  muted: boolean;
  setMuted(m: boolean): void;
}

/** Mute preference, persisted per browser. */
export const useSoundPref = create<SoundPref>((set) => ({
  muted: typeof window === 'undefined' ? false : readMuted(),
  setMuted(muted) {
    try {
      window.localStorage.setItem(SOUND_STORAGE_KEY, muted ? 'off' : 'on');
    } catch {
      // Storage unavailable: the choice holds for this page only.
    }
    set({ muted });
  },
}));

type Cue = 'captured' | 'warning';

/**
 * A short cue on the Web Audio API (an oscillator, no sound files): two rising notes for a
 * captured point, two low notes for a warning. The audio context starts on the first key or
 * pointer press on the page, as browsers require.
 */
export function useCaptureSound(): (cue: Cue) => void {
  const ctxRef = useRef<AudioContext | null>(null);
  const muted = useSoundPref((s) => s.muted);

  useEffect(() => {
    const unlock = () => {
      const Ctor = window.AudioContext ?? (window as unknown as { webkitAudioContext?: typeof AudioContext }).webkitAudioContext;
      if (!Ctor) return;
      ctxRef.current ??= new Ctor();
      void ctxRef.current.resume().catch(() => {});
    };
    window.addEventListener('pointerdown', unlock);
    window.addEventListener('keydown', unlock);
    return () => {
      window.removeEventListener('pointerdown', unlock);
      window.removeEventListener('keydown', unlock);
    };
  }, []);

  useEffect(
    () => () => {
      void ctxRef.current?.close().catch(() => {});
      ctxRef.current = null;
    },
    [],
  );

  return useCallback(
    (cue: Cue) => {
      if (muted) return;
      const ctx = ctxRef.current;
      if (!ctx || ctx.state !== 'running') return;
      const notes = cue === 'captured' ? [660, 990] : [330, 247];
      const t0 = ctx.currentTime;
      notes.forEach((f, i) => {
        const osc = ctx.createOscillator();
        const gain = ctx.createGain();
        osc.type = 'sine';
        osc.frequency.value = f;
        const start = t0 + i * 0.12;
        gain.gain.setValueAtTime(0.0001, start);
        gain.gain.exponentialRampToValueAtTime(0.25, start + 0.015);
        gain.gain.exponentialRampToValueAtTime(0.0001, start + 0.11);
        osc.connect(gain).connect(ctx.destination);
        osc.start(start);
        osc.stop(start + 0.12);
      });
    },
    [muted],
  );
}
