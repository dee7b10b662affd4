import { ESLint } from 'eslint';
import { describe, expect, it } from 'vitest';

// The import boundaries of HOUSE-STYLE.md, proved by linting code placed at the paths it would live at.
const eslint = new ESLint({ cwd: process.cwd() });

async function messages(filePath: string, code: string) {
  const [result] = await eslint.lintText(code, { filePath });
  return result!.messages.filter((m) => m.ruleId === 'stillpoint/imports').map((m) => m.message);
}

describe('lint: import boundaries', () => {
  it('fails when shared/ imports from server/ or src/', async () => {
    expect(await messages('shared/calc/probe.ts', "import { parseEnv } from '../../server/env';\nexport const x = parseEnv;\n")).toHaveLength(1);
    expect(await messages('shared/schemas/probe.ts', "import { x } from '../../src/lib/api-client';\nexport const y = x;\n")).toHaveLength(1);
  });
  it('fails when src/ imports from server/', async () => {
    expect(await messages('src/lib/probe.ts', "import { createApp } from '../../server/app';\nexport const y = createApp;\n")).toHaveLength(1);
  });
  it('fails when a feature imports another feature, or HTTP reaches the db directly', async () => {
    expect(await messages('src/features/queue/probe.ts', "import { x } from '../users/api/list';\nexport const y = x;\n")).toHaveLength(1);
    expect(await messages('server/http/routes/probe.ts', "import { x } from '../../db/client';\nexport const y = x;\n")).toHaveLength(1);
  });
  it('fails when anything but bench/transport imports serialport, or anything outside db imports drizzle', async () => {
    expect(await messages('server/services/probe.ts', "import { SerialPort } from 'serialport';\nexport const y = SerialPort;\n")).toHaveLength(1);
    expect(await messages('server/services/probe2.ts', "import { eq } from 'drizzle-orm';\nexport const y = eq;\n")).toHaveLength(1);
  });
  it('passes the allowed directions', async () => {
    expect(await messages('server/services/probe.ts', "import { evaluateCalibration } from '../../shared/calc';\nexport const y = evaluateCalibration;\n")).toEqual([]);
    expect(await messages('src/lib/probe.ts', "import { ROLES } from '../../shared/schemas/auth';\nexport const y = ROLES;\n")).toEqual([]);
  });
});
