/**
 * Order of the test files inside a project. Vitest starts the files that took longest last time
 * first; with no timings yet (a clean clone) it starts the larger files first, which left some of
 * the longest suites (a capture run, a first start seeding a data directory) to start near the end
 * and run alone while the other worker slot stood idle. Here, files that have no timing yet and
 * are known to be long start first; everything else keeps vitest's order. Only the order changes, never what runs.
 */
import path from 'node:path';
import { BaseSequencer, type TestSpecification } from 'vitest/node';

/**
 * Longest first: integration and end-to-end files over about 60 s in a clean-clone `npm test`
 * (2026-12-03, every lane at once on the shared two-core machine), longest at the top.
 */
const LONG = [
  'tests/integration/storage-edges.test.ts',
  'tests/integration/runs-capture.test.ts',
  'tests/integration/stream-replay-storm.test.ts',
  'tests/integration/mail-schedule.test.ts',
  'tests/integration/accounts.test.ts',
  'tests/integration/bench-identity.test.ts',
  'tests/integration/sim-autopilot-follow.test.ts',
  'tests/integration/review-loop.test.ts',
  'tests/integration/hart-job-trims.test.ts',
  'tests/e2e/layout-widths.test.ts',
  'tests/e2e/record-flow.test.ts',
  'tests/e2e/run-flow.test.ts',
  'tests/e2e/units-and-flow.test.ts',
  'tests/e2e/run-warnings.test.ts',
  'tests/e2e/hart-job.test.ts',
];

export default class LongFirstSequencer extends BaseSequencer {
  override async sort(files: TestSpecification[]): Promise<TestSpecification[]> {
    const sorted = await super.sort(files);
    const root = this.ctx.config.root;
    const rel = (f: TestSpecification) => path.relative(root, f.moduleId).split(path.sep).join('/');
    const timed = (f: TestSpecification) => this.ctx.cache.getFileTestResults(`${f.project.name}:${rel(f)}`) !== undefined;
    const rank = (f: TestSpecification) => {
      const i = LONG.indexOf(rel(f));
      return i < 0 || timed(f) ? LONG.length : i;
    };
    // Reorder only inside a project (vitest's order of projects and groups stays), stably.
    const projectAt = new Map<string, number>();
    sorted.forEach((f, i) => projectAt.has(f.project.name) || projectAt.set(f.project.name, i));
    const at = new Map(sorted.map((f, i) => [f, i]));
    return [...sorted].sort((a, b) => projectAt.get(a.project.name)! - projectAt.get(b.project.name)! || rank(a) - rank(b) || at.get(a)! - at.get(b)!);
  }
}
