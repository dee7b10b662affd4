import Papa from 'papaparse';
import { describe, expect, it } from 'vitest';
import { ApiClient, demoEmail } from '../helpers/test-server';
import { useLeadAndTech } from './records-helpers';

const ctx = useLeadAndTech();

const HEADER = 'tag,kind,service,location,lrv,urv,unit,outputMode,cutoffMode,cutoffValue,tolerancePct,intervalDays,lastCalibratedOn,notes';
const GOOD_1 = 'FT-901,dp-flow,Test loop A flow,Test bay,0,100,kPa,sqrt-transmitter,clamp,6,0.5,365,2026-01-15,';
const GOOD_2 = 'PT-902,pressure,"Test header, north",Test bay,0,1000,kPa,linear,none,0,0.5,365,,"quoted, with comma"';
const BAD_LRV = 'FT-903,dp-flow,Bad LRV,Test bay,abc,100,kPa,sqrt-transmitter,none,0,0.5,365,,';
const BAD_UNIT = 'FT-904,dp-flow,Bad unit,Test bay,0,100,furlongs,sqrt-transmitter,none,0,0.5,365,,';
const DUP_DB = 'FT-101,dp-flow,Already there,Test bay,0,100,kPa,sqrt-transmitter,none,0,0.5,365,,';
const BAD_RANGE = 'PT-905,pressure,Equal LRV and URV,Test bay,5,5,kPa,linear,none,0,0.5,0,2026-13-40,';
const MIXED = [HEADER, GOOD_1, BAD_LRV, GOOD_2, BAD_UNIT, DUP_DB, BAD_RANGE].join('\n');

async function total(): Promise<number> {
  return (await ctx.lead.get('/api/instruments?pageSize=1')).body.total;
}
async function auditCount(action: string): Promise<number> {
  return ((await ctx.lead.get('/api/audit?entity=instrument&limit=1000')).body.items as Array<{ action: string }>).filter((e) => e.action === action).length;
}

describe('instrument CSV import', () => {
  it('dry-runs a file with good and bad rows: reports each bad row by row and line, previews the good ones, writes nothing', async () => {
    const n0 = await total();
    const r = await ctx.lead.post('/api/instruments/import', { csv: MIXED });
    expect(r.status).toBe(200);
    const rep = r.body;
    expect(rep).toMatchObject({ dryRun: true, total: 6, valid: 2, invalid: 4, written: 0, fileErrors: [] });
    const byRow = Object.fromEntries(rep.rows.map((x: { row: number }) => [x.row, x]));
    expect(byRow[1]).toMatchObject({ ok: true, key: 'FT-901', line: 2, value: { tag: 'FT-901', lrv: 0, urv: 100, lastCalibratedOn: '2026-01-15' } });
    expect(byRow[2]).toMatchObject({ ok: false, key: 'FT-903', line: 3 });
    expect(byRow[2].errors.lrv).toEqual(['Enter the LRV as a number']);
    expect(byRow[3]).toMatchObject({ ok: true, value: { service: 'Test header, north', notes: 'quoted, with comma' } });
    expect(byRow[4].errors.unit).toBeDefined();
    expect(byRow[5].errors.tag).toEqual(['Already registered']);
    expect(byRow[6].errors).toMatchObject({ urv: ['The LRV and URV must differ'], lastCalibratedOn: ['No such date'] });
    expect(byRow[6].errors.intervalDays).toBeDefined();
    expect(await total()).toBe(n0);
    expect(await auditCount('instrument.created')).toBe(0);
  });

  it('refuses to confirm while any row has an error, naming each bad row, and writes nothing', async () => {
    const n0 = await total();
    const r = await ctx.lead.post('/api/instruments/import', { csv: MIXED, confirm: true });
    expect(r.status).toBe(400);
    expect(r.body.error.message).toMatch(/Nothing was written: 4 of 6 rows have errors/);
    expect(Object.keys(r.body.error.fields)).toEqual(expect.arrayContaining(['row 2.lrv', 'row 4.unit', 'row 5.tag', 'row 6.urv']));
    expect(await total()).toBe(n0);
    expect((await ctx.lead.get('/api/instruments?q=FT-901')).body.total).toBe(0);
  });

  it('takes the file as a multipart upload too (dry run)', async () => {
    const form = new FormData();
    form.append('file', new Blob([MIXED], { type: 'text/csv' }), 'instruments.csv');
    const res = await fetch(`${ctx.srv.url}/api/instruments/import`, { method: 'POST', body: form, headers: { cookie: ctx.lead.cookie, origin: ctx.srv.url } });
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body).toMatchObject({ dryRun: true, valid: 2, invalid: 4 });
  });

  it('refuses a binary file', async () => {
    const form = new FormData();
    form.append('file', new Blob([new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0xff, 0xfe, 0x00])], { type: 'text/csv' }), 'x.csv');
    const res = await fetch(`${ctx.srv.url}/api/instruments/import`, { method: 'POST', body: form, headers: { cookie: ctx.lead.cookie, origin: ctx.srv.url } });
    expect(res.status).toBe(415);
  });

  it('reports missing and unknown columns and rows that appear twice', async () => {
    const r = await ctx.lead.post('/api/instruments/import', { csv: 'tag,kind,colour\nFT-950,dp-flow,red\n' });
    expect(r.body.fileErrors.join('\n')).toMatch(/Missing columns: lrv, urv, unit, outputMode, tolerancePct, intervalDays/);
    expect(r.body.fileErrors.join('\n')).toMatch(/Unknown column: colour/);
    const d = await ctx.lead.post('/api/instruments/import', { csv: [HEADER, GOOD_1, GOOD_1.replace('Test loop A flow', 'again')].join('\r\n') });
    expect(d.body.rows[1].errors.tag).toEqual(['Appears twice in the file (also row 1)']);
  });

  it('writes every row in one go once the file is clean, auditing each new tag', async () => {
    const n0 = await total();
    const clean = [HEADER, GOOD_1, GOOD_2].join('\n');
    const r = await ctx.lead.req('POST', '/api/instruments/import?confirm=true', clean, { 'content-type': 'text/csv' });
    expect(r.status).toBe(201);
    expect(r.body).toMatchObject({ dryRun: false, written: 2, invalid: 0 });
    expect(await total()).toBe(n0 + 2);
    const ft = (await ctx.lead.get('/api/instruments?q=FT-901')).body.items[0];
    expect(ft).toMatchObject({ tag: 'FT-901', outputMode: 'sqrt-transmitter', cutoffMode: 'clamp', cutoffValue: 6, lastCalibratedOn: '2026-01-15' });
    expect(await auditCount('instrument.created')).toBe(2);
    expect(await auditCount('instruments.imported')).toBe(1);
    // The same file again: every row is already registered.
    const again = await ctx.lead.post('/api/instruments/import', { csv: clean });
    expect(again.body.rows.every((x: { errors: { tag?: string[] } }) => x.errors.tag?.[0] === 'Already registered')).toBe(true);
  });

  it('is for leads and admins only', async () => {
    expect((await ctx.tech.post('/api/instruments/import', { csv: MIXED })).status).toBe(403);
    const auditor = new ApiClient(ctx.srv.url);
    await auditor.login(demoEmail('auditor'));
    expect((await auditor.post('/api/standards/import', { csv: 'x' })).status).toBe(403);
  });
});

describe('CSV export', () => {
  it('exports the instrument register in the import layout; the export re-imports as all already registered', async () => {
    const res = await fetch(`${ctx.srv.url}/api/instruments/export.csv`, { headers: { cookie: ctx.tech.cookie } });
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toMatch(/text\/csv/);
    expect(res.headers.get('content-disposition')).toMatch(/attachment; filename="?instruments-\d{4}-\d{2}-\d{2}\.csv"?/);
    const text = await res.text();
    const parsed = Papa.parse<Record<string, string>>(text, { header: true, skipEmptyLines: true });
    expect(parsed.meta.fields!.slice(0, 14)).toEqual(HEADER.split(','));
    const ft101 = parsed.data.find((r) => r.tag === 'FT-101')!;
    expect(ft101).toMatchObject({ outputMode: 'sqrt-transmitter', unit: 'inH2O@68F', 'pe.taps': 'flange', 'pe.fluid': 'liquid' });
    const back = await ctx.lead.post('/api/instruments/import', { csv: text });
    expect(back.body.fileErrors).toEqual([]);
    expect(back.body.rows.length).toBe(parsed.data.length);
    for (const row of back.body.rows) expect(row.errors).toEqual({ tag: ['Already registered'] });
  });

  it('guards text cells that a spreadsheet would run as a formula', async () => {
    const csv = [HEADER, 'FT-960,dp-flow,=HYPERLINK("x"),Test bay,0,100,kPa,linear,none,0,0.5,365,,'].join('\n');
    expect((await ctx.lead.post('/api/instruments/import', { csv, confirm: true })).status).toBe(201);
    const text = await (await fetch(`${ctx.srv.url}/api/instruments/export.csv`, { headers: { cookie: ctx.lead.cookie } })).text();
    expect(text).toContain(`'=HYPERLINK`);
    const rep = await ctx.lead.post('/api/instruments/import', { csv: text });
    const row = rep.body.rows.find((r: { key: string }) => r.key === 'FT-960');
    expect(row.errors.tag).toEqual(['Already registered']);
  });
});

describe('standards CSV', () => {
  const SH = 'kind,description,serial,rangeMin,rangeMax,unit,pctReading,pctFullScale,floor,certificateU,certificateK,resolution,certificateNo,calibratedOn,dueOn,calibratingLab';
  it('dry-runs, refuses bad rows, then imports and exports', async () => {
    const good = 'pressure,Test module 0–7 bar,T-STD-1,0,700,kPa,0.02,0.01,0,,,0.01,TCL-1,2026-01-01,2027-01-01,Harbourside Pressure Laboratory';
    const bad = 'current,Meter with dates reversed,T-STD-2,0,24,mA,0.05,0,0.002,,,0.001,TCL-2,2026-06-01,2026-01-01,';
    const r = await ctx.lead.post('/api/standards/import', { csv: [SH, good, bad].join('\n') });
    expect(r.body).toMatchObject({ valid: 1, invalid: 1 });
    expect(r.body.rows[1].errors.dueOn).toEqual(['The due date must come after the calibration date']);
    expect((await ctx.lead.post('/api/standards/import', { csv: [SH, good, bad].join('\n'), confirm: 'true' })).status).toBe(400);
    expect((await ctx.lead.get('/api/standards?q=T-STD')).body.total).toBe(0);
    const ok = await ctx.lead.post('/api/standards/import', { csv: [SH, good].join('\n'), confirm: true });
    expect(ok.status).toBe(201);
    const std = (await ctx.lead.get('/api/standards?q=T-STD-1')).body.items[0];
    expect(std).toMatchObject({ serial: 'T-STD-1', calibratingLab: 'Harbourside Pressure Laboratory', rangeMax: 700, accuracy: { pctReading: 0.02, pctFullScale: 0.01, floor: 0, certificateU: null } });
    const text = await (await fetch(`${ctx.srv.url}/api/standards/export.csv`, { headers: { cookie: ctx.lead.cookie } })).text();
    expect(text.split('\r\n')[0]).toBe(SH);
    expect(text).toContain('T-STD-1');
  });
});
