import { defineConfig } from 'vitest/config';
import react from '@vitejs/plugin-react';

/**
 * Test projects: shared code runs under Node and under jsdom (it must work in both),
 * server unit tests, client component tests, cross-boundary integration tests, and
 * end-to-end tests that drive Debian's Chromium.
 */
export default defineConfig({
  test: {
    dangerouslyIgnoreUnhandledErrors: false,
    projects: [
      {
        test: { name: 'shared', environment: 'node', include: ['shared/**/*.test.ts'] },
      },
      {
        test: { name: 'shared-dom', environment: 'jsdom', include: ['shared/**/*.test.ts'] },
      },
      {
        test: {
          name: 'server',
          environment: 'node',
          include: ['server/**/*.test.ts', 'simulators/**/*.test.ts'],
          testTimeout: 30_000,
        },
      },
      {
        plugins: [react()],
        test: { name: 'client', environment: 'jsdom', include: ['src/**/*.test.{ts,tsx}'] },
      },
      {
        test: {
          name: 'integration',
          environment: 'node',
          include: ['tests/integration/**/*.test.ts'],
          testTimeout: 60_000,
          hookTimeout: 60_000,
          fileParallelism: false,
        },
      },
      {
        test: {
          name: 'proof',
          environment: 'node',
          include: ['tests/proof/**/*.test.ts'],
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
          globalSetup: ['tests/e2e/global-setup.ts'],
          testTimeout: 180_000,
          hookTimeout: 180_000,
          fileParallelism: false,
        },
      },
    ],
  },
});
