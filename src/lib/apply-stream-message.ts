import type { QueryClient } from '@tanstack/react-query';
import type { Run } from '../../shared/schemas/runs';
import type { StreamMessage } from '../../shared/schemas/stream';
import { liveSamples, type LiveSampleStore } from '../stores/live-samples';
import { useLiveRun } from '../stores/live-run';
import { queryKeys } from './query-keys';

/**
 * Applies stream messages (shared/schemas/stream.ts, the capture path's event map) to the client's
 * state: samples to the ring buffers, warnings and hold progress to the live-run store, point and
 * run events to the TanStack Query caches. A `point.captured` arrives only once the capture is stored,
 * with the capture itself.
 */
export function applyStreamMessage(m: StreamMessage, queryClient: QueryClient, samples: LiveSampleStore = liveSamples): void {
  const live = useLiveRun.getState();
  switch (m.type) {
    case 'sample.received':
      if (samples.bench !== null && m.benchId !== samples.bench) return;
      samples.push(m.device, m.wallMs, m.value, m.unit);
      return;
    case 'point.changed':
      live.pointChanged(m);
      queryClient.setQueryData<Run>(queryKeys.run(m.runId), (run) =>
        run
          ? {
              ...run,
              currentIndex: m.state === 'captured' ? run.currentIndex : m.index,
              points: run.points.map((p) => (p.index === m.index ? { ...p, state: m.state, flags: m.flags, ...(m.warning !== undefined ? { warning: m.warning } : {}) } : p)),
            }
          : run,
      );
      return;
    case 'point.captured':
      live.captured(m.runId, m.index);
      queryClient.setQueryData<Run>(queryKeys.run(m.runId), (run) =>
        run ? { ...run, points: run.points.map((p) => (p.index === m.index ? { ...p, state: 'captured', flags: m.flags, capture: m.capture } : p)) } : run,
      );
      // Results depend on every captured point: read them again.
      void queryClient.invalidateQueries({ queryKey: queryKeys.run(m.runId) });
      return;
    case 'run.warned':
      live.warned({ kind: m.kind, runId: m.runId, index: m.index, message: m.message, ratePctSpanPerMin: m.ratePctSpanPerMin });
      queryClient.setQueryData<Run>(queryKeys.run(m.runId), (run) =>
        run ? { ...run, points: run.points.map((p) => (p.index === m.index ? { ...p, warning: m.message } : p)) } : run,
      );
      return;
    case 'run.changed':
      queryClient.setQueryData<Run>(queryKeys.run(m.runId), (run) => (run ? { ...run, status: m.status, currentIndex: m.currentIndex } : run));
      void queryClient.invalidateQueries({ queryKey: queryKeys.run(m.runId) });
      void queryClient.invalidateQueries({ queryKey: queryKeys.jobs });
      return;
    case 'device.connected':
      live.device(m.device, { connected: true, path: m.path, reason: null, at: m.at });
      void queryClient.invalidateQueries({ queryKey: queryKeys.bench });
      return;
    case 'device.disconnected':
      live.device(m.device, { connected: false, path: m.path, reason: m.reason, at: m.at });
      void queryClient.invalidateQueries({ queryKey: queryKeys.bench });
      return;
    case 'stream.reset':
      // The server restarted or cannot replay what we missed: re-read the runs and all live server state.
      void queryClient.invalidateQueries({ queryKey: queryKeys.runs });
      void queryClient.invalidateQueries({ queryKey: queryKeys.jobs });
      void queryClient.invalidateQueries({ queryKey: queryKeys.bench });
      return;
    case 'stream.opened':
    case 'lines.acked':
      return;
  }
}
