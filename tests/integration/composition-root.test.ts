/**
 * Wiring at the composition root: only server/boot.ts (and the agent's own entry) builds the
 * simulated rig and chooses the serial binding; only server/env.ts reads the environment.
 */
import fs from 'node:fs';
import path from 'node:path';
import { ESLint } from 'eslint';
import { describe, expect, it } from 'vitest';
import { parseEnv } from '../../server/env';

const root = process.cwd();

function sources(dir: string): string[] {
  const out: string[] = [];
  for (const e of fs.readdirSync(path.join(root, dir), { withFileTypes: true })) {
    const rel = path.join(dir, e.name);
    if (e.isDirectory()) out.push(...sources(rel));
    else if (e.name.endsWith('.ts') && !e.name.endsWith('.test.ts')) out.push(rel);
  }
  return out;
}

describe('composition root', () => {
  it('no file under server/services, server/http or server/ws mentions simulators/', () => {
    const hits = ['server/services', 'server/http', 'server/ws'].flatMap(sources).filter((f) => fs.readFileSync(path.join(root, f), 'utf8').includes('simulators/'));
    expect(hits).toEqual([]);
  });

  it('only server/env.ts reads process.env', () => {
    const hits = sources('server').filter((f) => f !== path.join('server', 'env.ts') && fs.readFileSync(path.join(root, f), 'utf8').includes('process.env'));
    expect(hits).toEqual([]);
  });

  it('lint refuses a service, route or socket module importing the simulators', async () => {
    // The probe files do not exist on disk, so the type-aware rules are off for them.
    const eslint = new ESLint({ cwd: root, overrideConfig: { languageOptions: { parserOptions: { projectService: false } }, rules: { '@typescript-eslint/no-floating-promises': 'off', '@typescript-eslint/no-misused-promises': 'off' } } });
    for (const file of ['server/services/probe.ts', 'server/http/routes/probe.ts', 'server/ws/probe.ts']) {
      const up = file.split('/').length - 1;
      const [r] = await eslint.lintText(`import { SimRig } from '${'../'.repeat(up)}simulators/sim-rig';\nexport const y = SimRig;\n`, { filePath: file });
      expect(r!.messages.filter((m) => m.ruleId === 'import-x/no-restricted-paths').map((m) => m.message)).toEqual([expect.stringContaining('Only the composition root (server/boot.ts) wires the simulators in')]);
    }
  });

  it('the local bench ports come through the validated env, both or neither', () => {
    expect(parseEnv({ BENCH: 'serial', BENCH_PRESSURE_PORT: '/dev/ttyUSB0', BENCH_CURRENT_PORT: '/dev/ttyUSB1' })).toMatchObject({ BENCH_PRESSURE_PORT: '/dev/ttyUSB0', BENCH_CURRENT_PORT: '/dev/ttyUSB1' });
    expect(() => parseEnv({ BENCH: 'serial', BENCH_PRESSURE_PORT: '/dev/ttyUSB0' })).toThrow(/BENCH_CURRENT_PORT: set both/);
  });
});
