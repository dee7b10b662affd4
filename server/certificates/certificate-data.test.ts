import { describe, expect, it } from 'vitest';
import { DECISION_RULES } from '../../shared/calc';
import { certificateProblems, conformityStatement, decisionRuleStatement, type CertificateResults } from './certificate-data';
import { sampleCertificate } from '../../tests/fixtures/sample-certificate';

const withDecisions = (r: CertificateResults, ds: CertificateResults['points'][number]['decision'][], overall: CertificateResults['overallDecision']): CertificateResults => ({
  ...r,
  points: r.points.slice(0, ds.length).map((p, i) => ({ ...p, decision: ds[i]! })),
  overallDecision: overall,
});

describe('conformityStatement (ISO/IEC 17025:2017 §7.8.6.2)', () => {
  const d = sampleCertificate();

  it('names the results, the specification and the outcome for as-found and as-left', () => {
    expect(conformityStatement(d)).toEqual([
      'As found, the instrument did not conform to its specified tolerance of ±0.50 % of flow span: fail at 2, conditional fail at 1 and conditional pass at 1 of the 9 test points, pass at the other 5.',
      'As left, the instrument conforms to its specified tolerance of ±0.50 % of flow span at all 9 test points.',
    ]);
  });

  it('says when conformity rests on conditional passes', () => {
    const s = conformityStatement({ ...d, asLeft: withDecisions(d.asLeft!, ['pass', 'conditional-pass', 'pass'], 'conditional-pass') });
    expect(s[1]).toBe(
      'As left, the instrument conforms to its specified tolerance of ±0.50 % of flow span at all 3 test points; at 1 of 3 test points the error lies within the tolerance but closer to a limit than its expanded uncertainty (conditional pass).',
    );
  });

  it('uses output span for a linear output and covers the no-adjustment case', () => {
    const s = conformityStatement({ ...d, instrument: { ...d.instrument, outputMode: 'linear' }, asFound: withDecisions(d.asFound, ['pass'], 'pass'), asLeft: undefined });
    expect(s).toEqual([
      'As found, the instrument conformed to its specified tolerance of ±0.50 % of output span at the single test point.',
      'No adjustment was made; the as-found results are also the as-left results.',
    ]);
  });
});

describe('decisionRuleStatement', () => {
  it('states every rule the calc engine applies, with its source', () => {
    for (const rule of DECISION_RULES) expect(decisionRuleStatement(rule)).toMatch(/ILAC-G8:09\/2019|Z540\.3/);
  });
});

describe('certificateProblems', () => {
  it('accepts the sample and lists each missing piece otherwise', () => {
    expect(certificateProblems(sampleCertificate())).toEqual([]);
    const p = certificateProblems(
      sampleCertificate({ revision: 3, issueDate: '17/03/2025', standards: [], signatures: [{ role: 'performed', name: 'X', meaning: 'm', signedAt: 'soon' }] }),
    );
    expect(p).toEqual([
      'issue date must be YYYY-MM-DD',
      'a revision after the first needs a reason',
      'no reference standards listed (traceability)',
      'no approval signature (mark it a draft to preview)',
      'signature of X has no valid date-time',
    ]);
  });
});
