/**
 * A complete sample certificate built through the calc engine, for tests and for previewing the
 * layout. The site, people and numbers are invented.
 */
import { evaluateCalibration, type EvaluateInput, type EvaluateOutput } from '../../shared/calc';
import type { CertificateData } from './certificate-data';

const POINTS_UP = [10, 25, 50, 75, 100];
const POINTS_DOWN = [75, 50, 25, 10];
/** Applied DP in mmH2O at 68 °F for each % flow on a 0–2500 range: DP% = flow%²/100. */
const dpAt = (flowPct: number) => (2500 * flowPct * flowPct) / 10000;

function evaluate(measured: number[]): EvaluateOutput {
  const nominals = [...POINTS_UP, ...POINTS_DOWN];
  const input: EvaluateInput = {
    instrument: {
      lrv: 0, urv: 2500, unit: 'mmH2O@68F', outputMode: 'sqrt-transmitter', cutoffMode: 'clamp', cutoffValue: 5, tolerancePctSpan: 0.5,
      // An invented orifice run (102.3 mm pipe, 61.4 mm bore, flange taps, hot water): flow in m³/h per point.
      primaryElement: { spec: { D: 0.1023, d: 0.0614, taps: 'flange', rho: 958, mu: 0.00028 }, flowUnit: 'm3/h' },
    },
    standards: {
      pressure: { kind: 'spec', unit: 'mmH2O@68F', pctOfReading: 0.025, pctOfFullScale: 0.005, fullScale: 5000, resolution: 0.1 },
      current: { pctOfReading: 0.01, floorMa: 0.0005, resolutionMa: 0.0001 },
    },
    decisionRule: 'non-binary',
    readings: nominals.map((n, i) => ({ nominalPct: n, direction: i < POINTS_UP.length ? 'up' : 'down', appliedDp: dpAt(n), measuredMa: measured[i]!, measuredMaSd: 0.0008, n: 30 })),
  };
  const r = evaluateCalibration(input);
  if (!r.ok) throw new Error(r.reason);
  return r.value;
}

/** As-found currents, mA: up 10 → 100 % flow, then down 75 → 10 %. */
export const SAMPLE_AS_FOUND_MA = [5.6412, 8.0528, 12.0712, 16.082, 20.0934, 16.0901, 12.0786, 8.0611, 5.6477];
/** As-left currents, mA, same order. */
export const SAMPLE_AS_LEFT_MA = [5.6011, 8.0009, 12.0016, 16.0008, 19.9987, 16.0012, 12.0021, 8.0014, 5.6019];

/** The sample certificate data. */
export function sampleCertificate(overrides: Partial<CertificateData> = {}): CertificateData {
  return {
    certificateNumber: 'SP-2025-0042',
    issueDate: '2025-03-17',
    revision: 1,
    laboratory: { name: 'Northvale District Utility — Instrument Workshop', address: ['Workshop B, 14 Reservoir Lane', 'Northvale NV1 2AB'], contact: 'workshop@northvale.example.test' },
    placeOfWork: "At the customer's site: boiler house, instrument bench 2",
    customer: { name: 'Northvale District Utility — Boiler House', address: ['Reservoir Lane', 'Northvale NV1 2AB'] },
    instrument: {
      tag: 'FT-101',
      description: 'DP flow transmitter on an orifice plate',
      manufacturer: 'Generic',
      model: 'DPT-3000',
      serialNumber: 'SN-448812',
      service: 'Boiler feed water flow',
      location: 'Boiler house, level 1',
      range: { lrv: 0, urv: 2500, unit: 'mmH2O@68F' },
      outputMode: 'sqrt-transmitter',
      cutoff: { mode: 'clamp', value: 5 },
      tolerancePctSpan: 0.5,
      condition: 'No visible damage; manifold and tubing tight',
    },
    method: {
      procedure: 'WP-CAL-07 rev 3: DP transmitter, square root in the transmitter, five points up and four down',
      basis: 'flow',
      pointsUp: POINTS_UP,
      pointsDown: POINTS_DOWN,
      holdSeconds: 30,
    },
    performed: { start: '2025-03-14T09:12:00Z', end: '2025-03-14T11:40:00Z' },
    environment: { temperatureC: 21.4, humidityPctRh: 46 },
    standards: [
      { role: 'Applied DP', description: 'Pressure calibrator, 0–5000 mmH2O', serial: 'PC-2231', certificateNumber: 'LAB-7781/24', calibratedBy: 'Accredited pressure lab', dueDate: '2025-09-30' },
      { role: 'Loop current', description: 'Bench multimeter, 6½ digit', serial: 'DM-0907', certificateNumber: 'LAB-1120/24', calibratedBy: 'Accredited electrical lab', dueDate: '2025-06-15' },
    ],
    decisionRule: 'non-binary',
    asFound: evaluate(SAMPLE_AS_FOUND_MA),
    asLeft: evaluate(SAMPLE_AS_LEFT_MA),
    trims: [
      { kind: 'lower-trim', appliedDp: 25, targetMa: 5.6, beforeMa: 5.6409, afterMa: 5.6008 },
      { kind: 'span-trim', appliedDp: 2500, targetMa: 20, beforeMa: 20.0931, afterMa: 19.9991 },
    ],
    remarks: ['Loop returned to service and the interlock bypass removed at 11:52 UTC under permit PTW-778.'],
    signatures: [
      { role: 'performed', name: 'Ana Ferreira', title: 'Instrument technician', meaning: 'Calibration performed', signedAt: '2025-03-14T11:45:10Z' },
      { role: 'approved', name: 'Lee Okafor', title: 'Instrument lead', meaning: 'Reviewed and approved', signedAt: '2025-03-17T08:02:33Z' },
    ],
    ...overrides,
  };
}
