import type { RunEvent } from '../../shared/schemas/stream';
import { CaptureEngine } from './capture-engine';
import type { BenchHub } from './hub';

/**
 * The capture engines of every bench, each created on first use and fed by the hub. Every run event
 * of an engine goes to `sink` (the run service, which stores it and then has the hub publish it);
 * the hub learns at once which run the bench's new samples belong to.
 */
export class CaptureEngines {
  private readonly engines = new Map<string, CaptureEngine>();

  constructor(
    private readonly hub: BenchHub,
    private readonly sink: (benchId: string, e: RunEvent) => void,
  ) {}

  /** The engine of a bench (created and subscribed to the hub on first use). */
  get(benchId: string): CaptureEngine {
    let e = this.engines.get(benchId);
    if (!e) {
      const engine = new CaptureEngine(benchId);
      engine.on('event', (ev) => {
        if (ev.type === 'run.changed') this.hub.setRun(benchId, ev.status === 'running' || ev.status === 'paused' ? ev.runId : null);
        this.sink(benchId, ev);
      });
      this.hub.subscribe(`capture-engine:${benchId}`, engine.consume);
      this.engines.set(benchId, (e = engine));
    }
    return e;
  }

  has(benchId: string): boolean {
    return this.engines.has(benchId);
  }

  /** The running or paused run on a bench, if any. */
  activeRunId(benchId: string): string | null {
    return this.engines.get(benchId)?.activeRunId ?? null;
  }
}
