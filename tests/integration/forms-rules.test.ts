/**
 * Server rules behind the forms and the safety questions (issue 13, items 8–10): a standard's unit
 * from the product's unit list, a hazardous medium needing the flush, the bypass question answered
 * on purpose, plausible ambient conditions, the TUR of each standard, and the calibrating
 * laboratory and conditions printed on the certificate and frozen with the record.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { demoStandards, passingAsFound } from './records-helpers';

let srv: TestServer;
let tech: ApiClient;
let lead: ApiClient;
let techId: string;
let dir: string;

const LAB = 'Harbourside Pressure Laboratory (invented)';

const standard = (over: Record<string, unknown> = {}) => ({
  kind: 'pressure',
  description: 'Pressure module (test)',
  serial: `T-${Math.random().toString(36).slice(2, 8)}`,
  rangeMin: -100,
  rangeMax: 100,
  unit: 'kPa',
  accuracy: { pctReading: 0.015, pctFullScale: 0.005, floor: 0 },
  resolution: 0.001,
  certificateNo: 'HPL-26-0042',
  calibratingLab: LAB,
  calibratedOn: '2026-06-01',
  dueOn: '2027-06-01',
  ...over,
});

/** Tags of this file's instruments: one server per file, so a counter keeps them apart (a random tag collided: 409). */
let tagSeq = 100;
async function newJob(instrument: Record<string, unknown>): Promise<{ jobId: string; tag: string }> {
  const tag = `FT-9${++tagSeq}`;
  const ins = await lead.post('/api/instruments', {
    tag, kind: 'dp-flow', service: 'Test fuel gas flow', location: 'Test bench', lrv: 0, urv: 25, unit: 'kPa', outputMode: 'sqrt-transmitter',
    cutoffMode: 'none', cutoffValue: 0, tolerancePct: 0.5, intervalDays: 180, ...instrument,
  });
  expect(ins.status, JSON.stringify(ins.body)).toBe(201);
  const job = await lead.post('/api/jobs', { instrumentId: ins.body.id, assigneeId: techId, dueOn: '2027-01-01' });
  expect(job.status, JSON.stringify(job.body)).toBe(201);
  return { jobId: job.body.id, tag };
}

beforeAll(async () => {
  srv = await startTestServer();
  tech = new ApiClient(srv.url);
  lead = new ApiClient(srv.url);
  techId = (await tech.login(demoEmail('tech'))).id ?? (await tech.get('/api/auth/me')).body.id;
  await lead.login(demoEmail('lead'));
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'stillpoint-forms-int-'));
}, 180_000);
afterAll(async () => {
  await srv?.close();
  if (dir) await fs.rm(dir, { recursive: true, force: true });
});

describe("a standard's unit comes from the product's unit list", () => {
  it('refuses free text and a pressure unit on a current meter, with the field named', async () => {
    const bad = await lead.post('/api/standards', standard({ unit: 'furlongs/fortnight' }));
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields.unit).toEqual(['Choose a unit from the list']);
    const wrongKind = await lead.post('/api/standards', standard({ kind: 'current', unit: 'kPa', rangeMin: 0, rangeMax: 30 }));
    expect(wrongKind.status).toBe(400);
    expect(wrongKind.body.error.fields.unit).toEqual(['A current meter reads in mA']);
  });

  it('accepts a listed pressure unit and mA for a current meter, and keeps the calibrating laboratory', async () => {
    const ok = await lead.post('/api/standards', standard({ unit: 'inH2O@68F', rangeMin: 0, rangeMax: 400 }));
    expect(ok.status, JSON.stringify(ok.body)).toBe(201);
    expect(ok.body).toMatchObject({ unit: 'inH2O@68F', calibratingLab: LAB });
    const meter = await lead.post('/api/standards', standard({ kind: 'current', unit: 'mA', rangeMin: 0, rangeMax: 30 }));
    expect(meter.status, JSON.stringify(meter.body)).toBe(201);
  });

  it('reports every field error at once, in plain words', async () => {
    const r = await lead.post('/api/standards', standard({ description: '', serial: 'x'.repeat(81), unit: 'furlongs/fortnight', resolution: 0, rangeMin: 'ten' }));
    expect(r.status).toBe(400);
    expect(r.body.error.fields).toMatchObject({
      description: ['Describe the standard'],
      serial: ['Keep this to 80 characters or fewer'],
      unit: ['Choose a unit from the list'],
      resolution: ['The resolution must be above 0'],
      rangeMin: ['Enter the range minimum as a number'],
    });
    const i = await lead.post('/api/instruments', { tag: 'FT-1', kind: 'dp-flow', lrv: 0, urv: 25, unit: 'kPa', outputMode: 'sqrt-transmitter', cutoffMode: 'clamp', cutoffValue: 500, tolerancePct: 0.5, intervalDays: 365 });
    expect(i.status).toBe(400);
    // Not "Cutoff must be a number": the value is a number, too large.
    expect(i.body.error.fields.cutoffValue).toEqual(['The cutoff is at most 50 %']);
  });
});

describe('safety questions answered on purpose', () => {
  it('asks the bypass question with no default, and a hazardous medium requires the flush', async () => {
    const { jobId } = await newJob({ hazardousMedium: true });
    const { pressure, current } = await demoStandards(srv);
    const a = await tech.req('PUT', `/api/jobs/${jobId}/checklist`, { standardIds: [pressure.id, current.id], permitNo: 'PTW-9001', operatorsInformed: true, isolated: true, vented: true });
    expect(a.status).toBe(200);
    expect(a.body.checklist.bypass.required).toBeNull();
    expect(a.body.hazardousMedium).toBe(true);
    expect(a.body.blockers).toEqual(['Answer whether an interlock bypass is needed', 'Confirm the hazardous medium is flushed (this tag is marked hazardous)']);
    // The run is refused while they stand.
    const refused = await tech.post(`/api/jobs/${jobId}/runs`, { kind: 'mode-check' });
    expect(refused.status).toBeGreaterThanOrEqual(400);
    const b = await tech.req('PUT', `/api/jobs/${jobId}/checklist`, { bypass: { required: false, description: '' }, flushed: true });
    expect(b.status).toBe(200);
    expect(b.body.blockers).toEqual([]);
  });

  it('does not ask for the flush on a tag whose medium is not marked hazardous', async () => {
    const { jobId } = await newJob({});
    const d = (await tech.get(`/api/jobs/${jobId}`)).body;
    expect(d.blockers.join('\n')).not.toMatch(/flushed/);
  });

  it('states the TUR each standard gives at the tolerance and warns below the site minimum', async () => {
    const { jobId } = await newJob({});
    // 0–2 MPa module on a 0–25 kPa transmitter at ±0.5 % of flow span: tolerance 2 × 0.5 % × 25 = 0.25 kPa;
    // accuracy at 25 kPa = 0.02 % × 25 + 0.005 % × 2000 = 0.105 kPa → TUR ≈ 2.38 (below 4 : 1).
    const d = (await tech.get(`/api/jobs/${jobId}`)).body;
    const big = (await demoStandardBySerial('QDU-PC-0952'))!;
    const fit = d.standardFits.find((f: { id: string }) => f.id === big.id);
    expect(fit.tur).toBeCloseTo(2.38, 2);
    expect(fit.warning).toMatch(/below the site minimum of 4 : 1/);
    const small = (await demoStandardBySerial('QDU-PC-0417'))!;
    // 0.015 % × 25 + 0.005 % × 100 = 0.00875 kPa → TUR ≈ 28.6.
    expect(d.standardFits.find((f: { id: string }) => f.id === small.id).tur).toBeCloseTo(28.6, 1);
  });
});

async function demoStandardBySerial(serial: string) {
  return ((await tech.get('/api/standards?limit=100')).body.items as Array<{ id: string; serial: string }>).find((s) => s.serial === serial);
}

describe('ambient conditions and condition on receipt', () => {
  it('refuses implausible values with each field named, and keeps plausible ones with who and when', async () => {
    const { jobId } = await newJob({});
    const bad = await tech.req('PUT', `/api/jobs/${jobId}/checklist`, { conditions: { temperatureC: 150, humidityPctRh: 120, onReceipt: '' } });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields).toMatchObject({
      'conditions.temperatureC': ['The ambient temperature must be at most 60 °C'],
      'conditions.humidityPctRh': ['The relative humidity cannot be above 100 %rh'],
      'conditions.onReceipt': ['Describe the condition on receipt (e.g. clean, no visible damage)'],
    });
    const cold = await tech.req('PUT', `/api/jobs/${jobId}/checklist`, { conditions: { temperatureC: -31, humidityPctRh: 50, onReceipt: 'Clean' } });
    expect(cold.body.error.fields['conditions.temperatureC']).toEqual(['The ambient temperature must be at least -30 °C']);
    const ok = await tech.req('PUT', `/api/jobs/${jobId}/checklist`, { conditions: { temperatureC: 21.5, humidityPctRh: 48, onReceipt: 'Clean, no visible damage' } });
    expect(ok.status).toBe(200);
    expect(ok.body.checklist.conditions).toMatchObject({ temperatureC: 21.5, humidityPctRh: 48, onReceipt: 'Clean, no visible damage', recorded: { byName: expect.any(String) } });
  });
});

describe('the certificate carries the conditions and each standard’s laboratory', () => {
  it('prints them from the frozen record', async () => {
    const { jobId, tag } = await newJob({});
    const lab = await lead.post('/api/standards', standard());
    expect(lab.status).toBe(201);
    const { current } = await demoStandards(srv);
    for (const patch of [
      { standardIds: [lab.body.id, current.id], permitNo: 'PTW-9002', bypass: { required: false, description: '' } },
      { operatorsInformed: true, isolated: true, vented: true, conditions: { temperatureC: 21.5, humidityPctRh: 48, onReceipt: 'Clean, no visible damage' } },
    ]) {
      const r = await tech.req('PUT', `/api/jobs/${jobId}/checklist`, patch);
      expect(r.status, JSON.stringify(r.body)).toBe(200);
    }
    await passingAsFound(srv, jobId, tag, techId);
    expect((await tech.req('PUT', `/api/jobs/${jobId}/checklist`, { returnedToService: true })).status).toBe(200);
    const sub = await tech.post(`/api/jobs/${jobId}/submit`);
    expect(sub.status, JSON.stringify(sub.body)).toBe(200);

    // The register changes after submission; the certificate keeps what was frozen.
    const changed = await lead.req('PUT', `/api/standards/${lab.body.id}`, { ...standard({ serial: lab.body.serial }), calibratingLab: 'Another laboratory' });
    expect(changed.status, JSON.stringify(changed.body)).toBe(200);

    const res = await fetch(`${srv.url}/api/jobs/${jobId}/certificate.pdf`, { headers: { cookie: lead.cookie } });
    expect(res.status).toBe(200);
    const file = path.join(dir, 'conditions.pdf');
    await fs.writeFile(file, Buffer.from(await res.arrayBuffer()));
    const r = spawnSync('pdftotext', [file, '-'], { encoding: 'utf8' });
    if (r.status !== 0) throw new Error(`pdftotext: ${r.stderr} (install poppler-utils)`);
    const text = r.stdout.replace(/\s+/g, ' ');
    expect(text).toContain('21.5 °C');
    expect(text).toContain('48 %rh');
    expect(text).toContain('Clean, no visible damage');
    expect(text).toContain('Harbourside Pressure');
    expect(text).not.toContain('Another laboratory');
    expect(text).not.toContain('Not recorded');
  }, 120_000);
});
