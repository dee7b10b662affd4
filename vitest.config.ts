import { defineConfig } from 'vitest/config';
import react from '@vitejs/plugin-react';
import LongFirstSequencer from './tests/helpers/sequencer';

/**
 * Test projects: shared code runs under Node and under jsdom (it must work in both),
 * server unit tests, client component tests, cross-boundary integration tests, the proofs, and
 * end-to-end tests that drive Debian's Chromium.
 *
 * How vitest 4 schedules them: projects run side by side in one pool whose size is `maxWorkers`
 * (default: cores − 1, so one worker on a two-core machine), and every project with
 * `fileParallelism: false` is put in one group that runs after all the others, one file at a time.
 * `npm test` (scripts/test.ts) therefore runs the slow projects in lanes of their own, one vitest
 * process each, at the same time. Integration files are independent (each boots its own in-memory
 * server on its own port), mostly wait on the simulated rig's real-time holds, and run two at a
 * time; so do the e2e files (each its own in-memory app on an ephemeral port and its own Chromium,
 * its own temporary files); proof files (server processes, load, timing figures) run one at a time.
 */
export default defineConfig({
  test: {
    dangerouslyIgnoreUnhandledErrors: false,
    // On a clean clone (no timings yet) the known-long files of a project start first.
    sequence: { sequencer: LongFirstSequencer },
    projects: [
      {
        // Unit projects share one worker and one environment across their files (isolate: false):
        // a fresh worker, module graph and jsdom per file cost more than the tests themselves
        // (client: 42 s → 10 s, shared under jsdom: 34 s → 6 s). Each test builds what it uses;
        // one that leaves global state behind would show here.
        test: { name: 'shared', environment: 'node', include: ['shared/**/*.test.ts'], isolate: false },
      },
      {
        test: { name: 'shared-dom', environment: 'jsdom', include: ['shared/**/*.test.ts'], isolate: false },
      },
      {
        test: {
          name: 'server',
          environment: 'node',
          include: ['server/**/*.test.ts', 'simulators/**/*.test.ts'],
          testTimeout: 30_000,
          isolate: false,
        },
      },
      {
        plugins: [react()],
        // 30 s: on a shared two-core machine a jsdom render has taken over the 5 s default.
        test: { name: 'client', environment: 'jsdom', include: ['src/**/*.test.{ts,tsx}'], testTimeout: 30_000, isolate: false },
      },
      {
        test: {
          name: 'integration',
          environment: 'node',
          include: ['tests/integration/**/*.test.ts'],
          globalSetup: ['tests/helpers/prepare.ts'],
          // Generous for a shared two-core machine: a server boot has taken over a minute under load.
          testTimeout: 120_000,
          hookTimeout: 120_000,
          // Two at a time. Three (tried 2026-12-03: most files wait on the rig's real-time holds,
          // and with two the machine stood about a quarter idle) saved 6 % of `npm test` but took
          // the load average to 20, where a 2 s hold and the replay storm's health check failed.
          maxWorkers: 2,
          // One module graph per worker, not per file: a fresh worker importing the whole server
          // for each of some forty files was a third of this project's time. Each file boots and
          // closes its own app; the one file on fake timers puts the real ones back after each test.
          isolate: false,
          // A group of its own: projects of one group share one pool size.
          sequence: { groupOrder: 1 },
        },
      },
      {
        test: {
          name: 'proof',
          environment: 'node',
          include: ['tests/proof/**/*.test.ts'],
          globalSetup: ['tests/helpers/prepare.ts'],
          testTimeout: 600_000,
          hookTimeout: 300_000,
          fileParallelism: false,
        },
      },
      {
        test: {
          name: 'e2e',
          environment: 'node',
          include: ['tests/e2e/**/*.test.ts'],
          globalSetup: ['tests/helpers/prepare.ts', 'tests/e2e/global-setup.ts'],
          testTimeout: 180_000,
          hookTimeout: 180_000,
          maxWorkers: 2,
          // One module graph per worker, not per file: every file imports the whole server (its boot)
          // and the helpers, about 9 s of transform and import each on a loaded two-core machine.
          // Each file builds its own app and Chromium in beforeAll and closes them in afterAll.
          isolate: false,
          sequence: { groupOrder: 2 },
        },
      },
    ],
  },
});
