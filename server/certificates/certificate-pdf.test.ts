import { spawnSync } from 'node:child_process';
import fs from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CertificateDataError } from './certificate-data';
import { renderCertificate } from './certificate-pdf';
import { sampleCertificate, SAMPLE_AS_FOUND_MA, SAMPLE_AS_LEFT_MA } from '../../tests/fixtures/sample-certificate';
import { ensurePoppler } from '../../tests/helpers/poppler';

let dir: string;
let pdfPath: string;
let pdf: Buffer;
let fonts: string;
let text: string;

function run(cmd: string, args: string[]): string {
  const r = spawnSync(cmd, args, { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`${cmd} failed: ${r.stderr}`);
  return r.stdout;
}

beforeAll(async () => {
  ensurePoppler();
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'stillpoint-cert-'));
  pdf = await renderCertificate(sampleCertificate());
  pdfPath = path.join(dir, 'certificate.pdf');
  await fs.writeFile(pdfPath, pdf);
  fonts = run('pdffonts', [pdfPath]);
  // Whitespace collapsed, so wrapped sentences can be matched whole.
  text = run('pdftotext', [pdfPath, '-']).replace(/\s+/g, ' ');
}, 120_000);

afterAll(async () => {
  if (dir) await fs.rm(dir, { recursive: true, force: true });
});

describe('renderCertificate', () => {
  it('writes numbers by the one sign rule: U+2212 minus, + on signed values, never a signed zero', () => {
    expect(text).toMatch(/\u2212\d\.\d{3}/); // a negative as-found error
    expect(text).toMatch(/\+\d\.\d{3}/);
    expect(text).not.toMatch(/[-\u2212+]0\.0+(?!\d*[1-9])\b/);
    expect(text).not.toMatch(/(^|\s)-\d/); // no hyphen-minus before a number
  });

  it('shows flow in engineering units for an orifice primary element, with the constant-C root departure', () => {
    expect(text).toContain('Flow in engineering units (m³/h) from the orifice primary element by ISO 5167-2:2003');
    expect(text).toContain('Constant-C root departure %');
  });

  it('produces a PDF', () => {
    expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    expect(pdf.length).toBeGreaterThan(10_000);
  });

  it('embeds Inter and JetBrains Mono and no other font', () => {
    const rows = fonts.split('\n').slice(2).filter((l) => l.trim());
    expect(rows.length).toBeGreaterThanOrEqual(3);
    for (const row of rows) {
      expect(row).toMatch(/\+(Inter|JetBrainsMono)-/);
      // Columns: name type encoding emb sub uni object ID
      expect(row).toMatch(/\s+yes\s+yes\s+yes\s+\d+\s+\d+\s*$/);
    }
    expect(fonts).toMatch(/Inter-Regular/);
    expect(fonts).toMatch(/Inter-SemiBold/);
    expect(fonts).toMatch(/JetBrainsMono-Regular/);
  });

  it('shows the tag, the as-found and as-left readings and the trims', () => {
    expect(text).toContain('FT-101');
    expect(text).toContain('SP-2025-0042');
    for (const ma of [...SAMPLE_AS_FOUND_MA, ...SAMPLE_AS_LEFT_MA]) expect(text).toContain(ma.toFixed(4));
    expect(text).toContain('Lower trim');
    expect(text).toContain('20.0931');
    // One unit spelling (shared/format), never the unit id; DP decimals by the screens' rule (span 2500 → 1).
    expect(text).toContain('0.0 to 2500.0 mmH2O at 68 °F');
    expect(text).not.toContain('mmH2O@68F');
    expect(text).not.toMatch(/MMH2O|K=2|k = 2\)/);
  });

  it('states the decision rule, the statement of conformity and the uncertainty', () => {
    expect(text).toContain('Non-binary statement with guard band w = U (ILAC-G8:09/2019)');
    expect(text).toContain('As found, the instrument did not conform to its specified tolerance of ±0.50 % of flow span');
    expect(text).toContain('As left, the instrument conforms to its specified tolerance of ±0.50 % of flow span at all 9 test points.');
    // k per point, t_p(nu_eff) (JCGM 100:2008 G.3-G.4): stated as a method, and printed for every point.
    expect(text).toContain("the coverage factor k of Student's t distribution at each point's effective degrees of freedom");
    const data = sampleCertificate();
    for (const p of [...data.asFound.points, ...data.asLeft!.points]) expect(text).toContain(p.coverageFactor!.toFixed(2));
    const ks = [...data.asFound.points, ...data.asLeft!.points].map((p) => p.coverageFactor!);
    expect(Math.min(...ks)).toBeGreaterThan(2); // finite nu_eff: k above the normal 2
  });

  it('carries traceability, environment, signatures, page numbers and the reproduction note', () => {
    expect(text).toContain('LAB-7781/24');
    expect(text).toContain('All were within their calibration due dates on 2025-03-14.');
    expect(text).toContain('21.4 °C');
    expect(text).toContain('Lee Okafor');
    expect(text).toContain('Reviewed and approved');
    expect(text).toContain('2025-03-17 08:02 UTC');
    expect(text).toMatch(/Page 1 of (\d+)/);
    const pages = Number(/Page 1 of (\d+)/.exec(text)![1]);
    expect(pages).toBeGreaterThanOrEqual(2);
    expect(text).toContain(`Page ${pages} of ${pages}`);
    expect(text.match(/shall not be reproduced except in full/g)).toHaveLength(pages);
    expect(text).toContain('End of certificate');
    expect(text).toContain('The results relate only to the item calibrated');
  });

  it('is deterministic for the same data', async () => {
    const again = await renderCertificate(sampleCertificate());
    expect(again.equals(pdf)).toBe(true);
  });

  it('prints a revision with its reason, and a draft banner', async () => {
    const rev = await renderCertificate(sampleCertificate({ revision: 2, revisionReason: 'Customer address corrected.', draft: true, signatures: [] }));
    const p = path.join(dir, 'rev.pdf');
    await fs.writeFile(p, rev);
    const t = run('pdftotext', [p, '-']).replace(/\s+/g, ' ');
    expect(t).toContain('This revision replaces revision 1 of certificate SP-2025-0042, which is withdrawn. Reason: Customer address corrected.');
    expect(t).toContain('DRAFT — not approved');
    expect(t).toContain('SP-2025-0042 · rev 2');
  });

  it('refuses data that cannot make a certificate', async () => {
    await expect(renderCertificate(sampleCertificate({ revision: 2 }))).rejects.toBeInstanceOf(CertificateDataError);
    await expect(renderCertificate(sampleCertificate({ signatures: [] }))).rejects.toThrow(/approval signature/);
  });
});
