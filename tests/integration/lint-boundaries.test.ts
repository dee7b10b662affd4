import fs from 'node:fs';
import path from 'node:path';
import { ESLint } from 'eslint';
import { afterAll, describe, expect, it } from 'vitest';
import { bundleSources } from '../helpers/server-bundle';

// The import boundaries of HOUSE-STYLE.md and the lint of issue-prone patterns, proved by linting
// code placed at the paths it would live at.
// Probe files do not exist on disk, so the type-aware rules (which need a tsconfig to hold the file) are off here.
const eslint = new ESLint({
  cwd: process.cwd(),
  overrideConfig: {
    languageOptions: { parserOptions: { projectService: false } },
    rules: { '@typescript-eslint/no-floating-promises': 'off', '@typescript-eslint/no-misused-promises': 'off' },
  },
});

async function messages(filePath: string, code: string, rule: string | RegExp) {
  const [result] = await eslint.lintText(code, { filePath });
  return result!.messages.filter((m) => (typeof rule === 'string' ? m.ruleId === rule : rule.test(m.ruleId ?? ''))).map((m) => m.message);
}

const PATHS = 'import-x/no-restricted-paths';
const PACKAGES = 'no-restricted-imports';

// Two files that import each other, written for the cycle check and removed after.
const probeDir = path.join(process.cwd(), 'shared', `lint-probe-${process.pid}`);
afterAll(() => fs.rmSync(probeDir, { recursive: true, force: true }));

describe('lint: import boundaries', () => {
  it('fails when shared/ imports from server/ or src/', async () => {
    expect(await messages('shared/calc/probe.ts', "import { parseEnv } from '../../server/env';\nexport const x = parseEnv;\n", PATHS)).toHaveLength(1);
    expect(await messages('shared/schemas/probe.ts', "import { apiFetch } from '../../src/lib/api-client';\nexport const y = apiFetch;\n", PATHS)).toHaveLength(1);
  });
  it('fails when src/ imports from server/, and server/ from src/', async () => {
    expect(await messages('src/lib/probe.ts', "import { createApp } from '../../server/app';\nexport const y = createApp;\n", PATHS)).toHaveLength(1);
    expect(await messages('server/services/probe.ts', "import { apiFetch } from '../../src/lib/api-client';\nexport const y = apiFetch;\n", PATHS)).toHaveLength(1);
  });
  it('fails when a feature imports another feature, or HTTP reaches the db directly', async () => {
    expect(await messages('src/features/queue/probe.ts', "import { usersQuery } from '../users/api/get-users';\nexport const y = usersQuery;\n", PATHS)).toHaveLength(1);
    expect(await messages('server/http/routes/probe.ts', "import { openDatabase } from '../../db/client';\nexport const y = openDatabase;\n", PATHS)).toHaveLength(1);
  });
  it('fails when a service imports the simulators (only the composition root wires them in)', async () => {
    expect(await messages('server/services/probe.ts', "import { SimRig } from '../../simulators/sim-rig';\nexport const y = SimRig;\n", PATHS)).toHaveLength(1);
  });
  it('fails when anything but bench/transport imports serialport, or anything outside db imports drizzle', async () => {
    expect(await messages('server/services/probe.ts', "import { SerialPort } from 'serialport';\nexport const y = SerialPort;\n", PACKAGES)).toHaveLength(1);
    expect(await messages('server/services/probe2.ts', "import { eq } from 'drizzle-orm';\nexport const y = eq;\n", PACKAGES)).toHaveLength(1);
    expect(await messages('server/db/probe.ts', "import { SerialPort } from 'serialport';\nexport const y = SerialPort;\n", PACKAGES)).toHaveLength(1);
  });
  it('passes the allowed directions', async () => {
    expect(await messages('server/services/probe.ts', "import { evaluateCalibration } from '../../shared/calc';\nexport const y = evaluateCalibration;\n", /./)).toEqual([]);
    expect(await messages('src/lib/probe.ts', "import { ROLES } from '../../shared/schemas/auth';\nexport const y = ROLES;\n", /./)).toEqual([]);
    expect(await messages('server/db/probe.ts', "import { eq } from 'drizzle-orm';\nexport const y = eq;\n", /./)).toEqual([]);
  });
  it('fails on an import cycle', async () => {
    fs.mkdirSync(probeDir, { recursive: true });
    const a = "import { b } from './b';\nexport const a = () => b();\n";
    fs.writeFileSync(path.join(probeDir, 'a.ts'), a);
    fs.writeFileSync(path.join(probeDir, 'b.ts'), "import { a } from './a';\nexport const b = () => a;\n");
    expect(await messages(path.join(probeDir, 'a.ts'), a, 'import-x/no-cycle')).toHaveLength(1);
  });
});

describe('lint: accessibility and promises', () => {
  it('fails on an <img> without alt text', async () => {
    const code = "export function Photo() {\n  return <img src=\"/a.png\" />;\n}\n";
    expect(await messages('src/components/ui/probe.tsx', code, 'jsx-a11y/alt-text')).toHaveLength(1);
    expect(await messages('src/components/ui/probe.tsx', code.replace('/>', 'alt="As-found photo" />'), 'jsx-a11y/alt-text')).toEqual([]);
  });
  it('fails on a floating promise in server code (type-aware: the file must exist for a tsconfig to hold it)', async () => {
    // The probe's own directory and tsconfig.json (the nearest one is the one the project service
    // takes), so type information is built for this one file, not for the whole server.
    const dir = path.join(process.cwd(), 'server', `lint-probe-${process.pid}`);
    const file = path.join(dir, 'probe.ts');
    const code = "export async function f(): Promise<void> {}\nexport function g() {\n  f();\n}\n";
    fs.mkdirSync(dir, { recursive: true });
    fs.writeFileSync(path.join(dir, 'tsconfig.json'), JSON.stringify({ extends: '../../tsconfig.base.json', compilerOptions: { noEmit: true }, include: ['probe.ts'] }));
    fs.writeFileSync(file, code);
    try {
      // Other lanes hash the server's sources meanwhile: the probe is not one of them (it may vanish
      // between their listing and reading it, which once failed a SIGKILL proof with ENOENT).
      expect(bundleSources().filter((f) => f.includes('lint-probe-'))).toEqual([]);
      expect(bundleSources()).toContain(path.join('server', 'main.ts'));
      const [result] = await new ESLint({ cwd: process.cwd() }).lintFiles([file]);
      expect(result!.messages.filter((m) => m.ruleId === '@typescript-eslint/no-floating-promises')).toHaveLength(1);
      fs.writeFileSync(file, code.replace('  f();', '  void f();'));
      const [handled] = await new ESLint({ cwd: process.cwd() }).lintFiles([file]);
      expect(handled!.messages.filter((m) => m.ruleId === '@typescript-eslint/no-floating-promises')).toEqual([]);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
