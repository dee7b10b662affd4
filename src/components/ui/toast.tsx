import { useEffect } from 'react';
import { create } from 'zustand';
import { cn } from '../../lib/cn';

export type ToastTone = 'info' | 'success' | 'error';

export interface Toast {
  id: number;
  title: string;
  description?: string | undefined;
  tone: ToastTone;
}

interface ToastState {
  toasts: Toast[];
  push(t: Omit<Toast, 'id' | 'tone'> & { tone?: ToastTone }): number;
  dismiss(id: number): void;
  clear(): void;
}

let nextId = 1;

/** At most this many toasts show at once; older ones drop off. */
const MAX_TOASTS = 4;

export const useToastStore = create<ToastState>((set) => ({
  toasts: [],
  push(t) {
    const id = nextId++;
    const item: Toast = { id, title: t.title, description: t.description, tone: t.tone ?? 'info' };
    set((s) => ({ toasts: [...s.toasts, item].slice(-MAX_TOASTS) }));
    return id;
  },
  dismiss(id) {
    set((s) => ({ toasts: s.toasts.filter((t) => t.id !== id) }));
  },
  clear() {
    set({ toasts: [] });
  },
}));

/** Show a toast from anywhere (event handlers, mutation callbacks). */
export function toast(title: string, opts: { description?: string; tone?: ToastTone } = {}): number {
  return useToastStore.getState().push({ title, ...opts });
}

const toneClass: Record<ToastTone, string> = {
  info: 'border-l-info',
  success: 'border-l-ok',
  error: 'border-l-danger',
};

/** Auto-dismiss delay: errors stay longer so they can be read. */
const DURATION_MS: Record<ToastTone, number> = { info: 5000, success: 5000, error: 9000 };

function ToastItem({ t }: { t: Toast }) {
  const dismiss = useToastStore((s) => s.dismiss);
  useEffect(() => {
    const timer = window.setTimeout(() => dismiss(t.id), DURATION_MS[t.tone]);
    return () => window.clearTimeout(timer);
  }, [t.id, t.tone, dismiss]);
  return (
    <li
      role={t.tone === 'error' ? 'alert' : 'status'}
      className={cn(
        'pointer-events-auto flex w-80 items-start gap-3 rounded-md border border-line border-l-4 bg-surface p-3 text-sm shadow-lg',
        toneClass[t.tone],
      )}
    >
      <div className="min-w-0 flex-1">
        <p className="font-medium text-ink">{t.title}</p>
        {t.description && <p className="mt-0.5 text-ink-muted">{t.description}</p>}
      </div>
      <button
        type="button"
        onClick={() => dismiss(t.id)}
        aria-label="Dismiss notification"
        className="rounded p-0.5 text-ink-faint hover:text-ink focus-visible:outline-2 focus-visible:outline-focus"
      >
        <svg viewBox="0 0 20 20" className="size-4" aria-hidden="true">
          <path d="M5 5l10 10M15 5L5 15" stroke="currentColor" strokeWidth="1.75" strokeLinecap="round" />
        </svg>
      </button>
    </li>
  );
}

/** Where toasts appear; render once near the root. */
export function Toaster() {
  const toasts = useToastStore((s) => s.toasts);
  return (
    <section aria-label="Notifications" className="pointer-events-none fixed right-4 bottom-4 z-50">
      <ol className="flex flex-col gap-2">
        {toasts.map((t) => (
          <ToastItem key={t.id} t={t} />
        ))}
      </ol>
    </section>
  );
}
