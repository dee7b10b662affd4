import { act, cleanup, fireEvent, render, renderHook, screen, within } from '@testing-library/react';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import type { RunPoint } from '../../../../shared/schemas/runs';
import { SHORTCUTS_STORAGE_KEY, useShortcutPref, useShortcuts, type Shortcut } from '../hooks/use-shortcuts';
import { ShortcutHelp } from './shortcut-help';
import { CurrentPoint } from './current-point';
import { PointList } from './point-list';

afterEach(cleanup);

const point = (over: Partial<RunPoint> = {}): RunPoint => ({
  index: 0,
  nominalPct: 10,
  basis: 'flow',
  dpPct: 1,
  targetDp: 1,
  expectedMa: 5.6,
  approach: 'up',
  window: 0.05,
  state: 'approaching',
  flags: [],
  capture: null,
  warning: null,
  ...over,
});

describe('paused run', () => {
  it('the point card reads as paused, not as approaching or "move towards the target"', () => {
    render(<CurrentPoint runId="r" point={point()} total={9} holdSeconds={30} unitLabel="inH₂O at 68 °F" dpDecimals={3} paused />);
    const card = screen.getByTestId('current-point');
    expect(screen.getByTestId('current-point-state').textContent).toBe('Paused');
    expect(card.textContent).not.toMatch(/Move towards the target|Approaching/);
    expect(screen.getByTestId('hold-caption').textContent).toMatch(/^Run paused/);
  });

  it('the same point running says what to do', () => {
    render(<CurrentPoint runId="r" point={point()} total={9} holdSeconds={30} unitLabel="kPa" dpDecimals={3} paused={false} />);
    expect(screen.getByTestId('current-point-state').textContent).toBe('Approaching');
    expect(screen.getByTestId('hold-caption').textContent).toBe('Move towards the target');
  });

  it('the point table shows the current point as paused, and the others as they are', () => {
    const points = [point({ index: 0, state: 'captured' }), point({ index: 1, state: 'approaching' }), point({ index: 2, state: 'waiting' })];
    render(<PointList points={points} currentIndex={1} results={null} dpDecimals={3} canAct={false} onRedo={() => {}} rooted paused />);
    expect(within(screen.getByTestId('point-row-1')).getByText('Paused')).toBeTruthy();
    expect(within(screen.getByTestId('point-row-1')).queryByText('Approaching')).toBeNull();
    expect(within(screen.getByTestId('point-row-0')).getByText('Captured')).toBeTruthy();
    expect(within(screen.getByTestId('point-row-2')).getByText('Waiting')).toBeTruthy();
    // States differ by shape too.
    expect(screen.getByTestId('point-row-0').querySelector('[data-mark="captured"]')).not.toBeNull();
    expect(screen.getByTestId('point-row-1').querySelector('[data-mark="paused"]')).not.toBeNull();
  });
});

describe('single-key shortcuts (WCAG 2.1.4)', () => {
  beforeEach(() => window.localStorage.clear());

  const press = (key: string) => window.dispatchEvent(new KeyboardEvent('keydown', { key }));

  it('fire while on and do nothing once switched off', () => {
    const run = vi.fn();
    const shortcuts: Shortcut[] = [{ key: 'm', cap: 'M', label: 'Manual capture', run }];
    const { rerender } = renderHook(({ on }) => useShortcuts(shortcuts, on), { initialProps: { on: true } });
    press('m');
    expect(run).toHaveBeenCalledTimes(1);
    rerender({ on: false });
    press('m');
    expect(run).toHaveBeenCalledTimes(1);
  });

  it('the keys are listed only while on; the switch turns them off', () => {
    const onChange = vi.fn();
    const shortcuts: Shortcut[] = [{ key: 'p', cap: 'P', label: 'Pause', run: () => {} }];
    const { rerender } = render(<ShortcutHelp shortcuts={shortcuts} on onChange={onChange} />);
    expect(screen.getByText('Pause')).toBeTruthy();
    fireEvent.click(screen.getByRole('switch', { name: 'Single-key shortcuts' }));
    expect(onChange).toHaveBeenCalledWith(false);
    rerender(<ShortcutHelp shortcuts={shortcuts} on={false} onChange={onChange} />);
    expect(screen.queryByText('Pause')).toBeNull();
    expect((screen.getByRole('switch', { name: 'Single-key shortcuts' }) as HTMLInputElement).checked).toBe(false);
  });

  it('the choice is remembered per user in this browser', () => {
    const a = renderHook(() => useShortcutPref('user-a'));
    expect(a.result.current.on).toBe(true);
    act(() => a.result.current.setOn(false));
    expect(a.result.current.on).toBe(false);
    expect(window.localStorage.getItem(`${SHORTCUTS_STORAGE_KEY}.user-a`)).toBe('off');
    const b = renderHook(() => useShortcutPref('user-b'));
    expect(b.result.current.on).toBe(true);
  });
});
