/**
 * What the suites share, made once before they start: the seeded template database (tarball and
 * data directory, tests/helpers/db-template.ts) and the prebuilt server bundle
 * (tests/helpers/server-bundle.ts). The global set-up of the integration, proof and e2e projects,
 * and the first step of `npm test` (scripts/test.ts), so that lanes starting together do not each
 * seed the demo history at once. Both are kept under `.tmp/` and remade only when their inputs change.
 */
import { pathToFileURL } from 'node:url';
import { demoTemplateDir } from './db-template';
import { serverBundle } from './server-bundle';
import { DEMO_PASSWORD } from './test-server';

export default async function prepare(): Promise<void> {
  await demoTemplateDir(DEMO_PASSWORD);
  await serverBundle();
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const t0 = performance.now();
  await prepare();
  console.log(`prepared the seeded template database and the server bundle in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  process.exit(0);
}
