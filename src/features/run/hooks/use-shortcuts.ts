import { useEffect, useRef } from 'react';

/** One keyboard shortcut of the capture screen. */
export interface Shortcut {
  /** `event.key`, compared case-insensitively (e.g. 'm', ' '). */
  key: string;
  /** Shown on screen. */
  label: string;
  /** Text of the key cap. */
  cap: string;
  run: () => void;
  enabled?: boolean;
}

function typingInto(target: EventTarget | null): boolean {
  if (!(target instanceof HTMLElement)) return false;
  return target.isContentEditable || ['INPUT', 'TEXTAREA', 'SELECT'].includes(target.tagName) || !!target.closest('dialog[open]');
}

/** Binds single-key shortcuts on the window; ignored while typing or while a dialog is open. */
export function useShortcuts(shortcuts: readonly Shortcut[]): void {
  const ref = useRef(shortcuts);
  useEffect(() => {
    ref.current = shortcuts;
  });
  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      if (e.ctrlKey || e.metaKey || e.altKey || e.repeat || typingInto(e.target)) return;
      if (document.querySelector('dialog[open]')) return;
      const s = ref.current.find((x) => x.key.toLowerCase() === e.key.toLowerCase() && x.enabled !== false);
      if (!s) return;
      e.preventDefault();
      s.run();
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, []);
}
