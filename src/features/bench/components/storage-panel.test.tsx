import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { cleanup, fireEvent, render, screen, waitFor } from '@testing-library/react';
import { afterEach, describe, expect, it, vi } from 'vitest';
import type { BenchStatus } from '../api/get-bench';
import { StoragePanel } from './storage-panel';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

/** A reply of GET /api/bench/storage as the server sends it (one quarantined NUL line, one damaged batch). */
const review = {
  quarantine: {
    total: 1,
    unacknowledged: 1,
    items: [
      {
        seq: 42,
        benchId: 'bench-1',
        device: 'current',
        runId: null,
        raw: 'A\u0000B',
        rawJson: '"A\\u0000B"',
        preview: 'A\\x00B',
        wallMs: 1.7e12,
        reason: '22021 invalid byte sequence for encoding "UTF8": 0x00',
        at: '2026-12-02T12:00:00.000Z',
        acknowledgedAt: null,
        acknowledgedBy: null,
      },
    ],
  },
  damaged: [{ file: 'samples.journal.damaged-2026-12-02T12-00-00.000Z-120', offset: 120, bytes: 88, reason: 'checksum mismatch (header 1a2b3c4d, bytes 0badf00d)', at: '2026-12-02T12:00:00.000Z' }],
};

const status = {
  mode: 'sim',
  benchId: 'bench-1',
  latestSeq: 50,
  benches: [],
  storage: { edgeRefused: 32, quarantined: { total: 1, unacknowledged: 1 }, damagedBatches: { total: 1, unacknowledged: 1 } },
} as BenchStatus;

function renderPanel(canAcknowledge: boolean) {
  const calls: { url: string; method: string }[] = [];
  vi.stubGlobal(
    'fetch',
    vi.fn(async (url: string, init?: RequestInit) => {
      calls.push({ url, method: init?.method ?? 'GET' });
      const body = url.startsWith('/api/bench/storage/acknowledge') ? { acknowledged: { rows: 1, batches: 1 } } : review;
      return new Response(JSON.stringify(body), { status: 200, headers: { 'content-type': 'application/json' } });
    }),
  );
  const qc = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  render(
    <QueryClientProvider client={qc}>
      <StoragePanel status={status} canAcknowledge={canAcknowledge} />
    </QueryClientProvider>,
  );
  return calls;
}

describe('StoragePanel', () => {
  it('shows edge-refused lines, quarantined samples with reason and escaped preview, and damaged batches', async () => {
    renderPanel(false);
    expect(screen.getByTestId('edge-refused').textContent).toBe('32');
    expect(screen.getByTestId('quarantined').textContent).toContain('1 not reviewed');
    expect(screen.getByText('Needs review')).toBeTruthy();
    const table = await screen.findByTestId('quarantine-table');
    expect(table.textContent).toContain('A\\x00B');
    expect(table.textContent).toContain('22021');
    expect((await screen.findByTestId('damaged-table')).textContent).toContain('checksum mismatch');
    // A technician sees what happened but cannot acknowledge it.
    expect(screen.queryByRole('button', { name: 'Acknowledge after review' })).toBeNull();
  });

  it('lets a lead acknowledge after review', async () => {
    const calls = renderPanel(true);
    fireEvent.click(screen.getByRole('button', { name: 'Acknowledge after review' }));
    await waitFor(() => expect(calls.some((c) => c.url === '/api/bench/storage/acknowledge' && c.method === 'POST')).toBe(true));
  });
});
