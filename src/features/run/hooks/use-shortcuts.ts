import { useEffect, useRef } from 'react';
import { create } from 'zustand';

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

/**
 * Binds single-key shortcuts on the window; ignored while typing or while a dialog is open.
 * Nothing is bound while `on` is false: single-key shortcuts can be switched off (WCAG 2.1.4).
 */
export function useShortcuts(shortcuts: readonly Shortcut[], on = true): void {
  const ref = useRef(shortcuts);
  useEffect(() => {
    ref.current = shortcuts;
  });
  useEffect(() => {
    if (!on) return;
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
  }, [on]);
}

/** localStorage key prefix of the shortcut switch; the user's id follows (one choice per user and browser). */
export const SHORTCUTS_STORAGE_KEY = 'stillpoint.shortcuts';

const storageKey = (userId: string | undefined) => `${SHORTCUTS_STORAGE_KEY}.${userId ?? 'anonymous'}`;

function readOn(userId: string | undefined): boolean {
  try {
    return window.localStorage.getItem(storageKey(userId)) !== 'off';
  } catch {
    return true;
  }
}

interface ShortcutPrefState {
  /** Choices read or made in this page, by user id. */
  byUser: Record<string, boolean>;
  set(userId: string | undefined, on: boolean): void;
}

const useShortcutPrefStore = create<ShortcutPrefState>((set) => ({
  byUser: {},
  set(userId, on) {
    try {
      window.localStorage.setItem(storageKey(userId), on ? 'on' : 'off');
    } catch {
      // Storage unavailable: the choice holds for this page only.
    }
    set((s) => ({ byUser: { ...s.byUser, [userId ?? 'anonymous']: on } }));
  },
}));

/** Whether single-key shortcuts are on for this user in this browser (on unless switched off), and the switch. */
export function useShortcutPref(userId: string | undefined): { on: boolean; setOn: (on: boolean) => void } {
  const chosen = useShortcutPrefStore((s) => s.byUser[userId ?? 'anonymous']);
  const setPref = useShortcutPrefStore((s) => s.set);
  return { on: chosen ?? readOn(userId), setOn: (on) => setPref(userId, on) };
}
