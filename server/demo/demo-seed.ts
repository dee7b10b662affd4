import type { Db } from '../db/client';
import { instrumentRepository, jobRepository, standardRepository, type InstrumentInsert } from '../db/repositories/register.repository';
import { siteRepository, userRepository } from '../db/repositories/user.repository';
import type { AuditService } from '../services/audit.service';
import { hashPassword } from '../services/auth.service';
import { addDays, isoDate } from '../services/dates';
import { seedDemoHistory } from './demo-history';

/**
 * The demo site (DESIGN.md §6): an invented district utility with a boiler house, a water
 * treatment stream and a compressed-air ring. Every name, serial and number here is invented
 * for the demo.
 */
export const DEMO_DOMAIN = 'stillpoint-demo.test';
export const DEMO_SITE_NAME = 'Quillmoor District Utility (demo)';

export const DEMO_USERS = [
  { email: `tech@${DEMO_DOMAIN}`, name: 'Ilse Varno', role: 'technician' },
  { email: `tech2@${DEMO_DOMAIN}`, name: 'Joss Amberley', role: 'technician' },
  { email: `lead@${DEMO_DOMAIN}`, name: 'Bram Oduya', role: 'lead' },
  { email: `admin@${DEMO_DOMAIN}`, name: 'Cato Pelling', role: 'admin' },
  { email: `auditor@${DEMO_DOMAIN}`, name: 'Nadia Frost', role: 'auditor' },
] as const;

type Demo = Omit<InstrumentInsert, 'lastCalibratedOn'> & { lastAgoDays: number };

const INSTRUMENTS: Demo[] = [
  { tag: 'FT-101', kind: 'dp-flow', service: 'Boiler 1 feedwater flow', location: 'Boiler house, level 0', lrv: 0, urv: 100, unit: 'inH2O@68F', outputMode: 'sqrt-transmitter', cutoffMode: 'clamp', cutoffValue: 6, tolerancePct: 0.5, intervalDays: 365, lastAgoDays: 380, primaryElement: { kind: 'orifice', pipeDiameterMm: 102.3, boreDiameterMm: 61.4, taps: 'flange', fluid: 'liquid', densityKgM3: 958, viscosityPaS: 0.00028, flowUnit: 'm3/h' } },
  { tag: 'FT-102', kind: 'dp-flow', service: 'Boiler 2 steam flow', location: 'Boiler house, level 1', lrv: 0, urv: 250, unit: 'mbar', outputMode: 'sqrt-transmitter', cutoffMode: 'linear', cutoffValue: 0.6, tolerancePct: 0.75, intervalDays: 365, lastAgoDays: 340 },
  { tag: 'FT-103', kind: 'dp-flow', hazardousMedium: true, service: 'Burner fuel gas flow', location: 'Boiler house, gas train', lrv: 0, urv: 25, unit: 'kPa', outputMode: 'sqrt-transmitter', cutoffMode: 'clamp', cutoffValue: 8, tolerancePct: 0.5, intervalDays: 180, lastAgoDays: 150, primaryElement: { kind: 'orifice', pipeDiameterMm: 77.9, boreDiameterMm: 38.9, taps: 'corner', fluid: 'gas', densityKgM3: 2.9, viscosityPaS: 0.0000108, kappa: 1.3, upstreamPressurePa: 350000, flowUnit: 'kg/h' } },
  { tag: 'PT-104', kind: 'pressure', service: 'Boiler 1 drum pressure', location: 'Boiler house, level 2', lrv: -100, urv: 1600, unit: 'kPa', outputMode: 'linear', cutoffMode: 'none', cutoffValue: 0, tolerancePct: 0.5, intervalDays: 365, lastAgoDays: 200 },
  { tag: 'FT-205', kind: 'dp-flow', service: 'Raw water inlet flow', location: 'Treatment stream, inlet works', lrv: 0, urv: 5000, unit: 'mmH2O@68F', outputMode: 'sqrt-host', cutoffMode: 'none', cutoffValue: 0, tolerancePct: 0.5, intervalDays: 365, lastAgoDays: 410 },
  { tag: 'FT-206', kind: 'dp-flow', service: 'Filter backwash flow', location: 'Treatment stream, filter gallery', lrv: 0, urv: 200, unit: 'inH2O@68F', outputMode: 'sqrt-transmitter', cutoffMode: 'clamp', cutoffValue: 5, tolerancePct: 1, intervalDays: 365, lastAgoDays: 90 },
  { tag: 'PDT-207', kind: 'pressure', service: 'Filter 3 differential', location: 'Treatment stream, filter gallery', lrv: 0, urv: 500, unit: 'mbar', outputMode: 'linear', cutoffMode: 'none', cutoffValue: 0, tolerancePct: 1, intervalDays: 730, lastAgoDays: 700 },
  { tag: 'PT-210', kind: 'pressure', service: 'Filter inlet header pressure', location: 'Treatment stream, filter gallery', lrv: 0, urv: 600, unit: 'kPa', outputMode: 'linear', cutoffMode: 'none', cutoffValue: 0, tolerancePct: 0.5, intervalDays: 365, lastAgoDays: 30 },
  { tag: 'LT-220', kind: 'dp-level', service: 'Clear-water tank level', location: 'Treatment stream, clear-water tank', lrv: 200, urv: 4200, unit: 'mmH2O@4C', outputMode: 'linear', cutoffMode: 'none', cutoffValue: 0, tolerancePct: 0.5, intervalDays: 365, lastAgoDays: 372 },
  { tag: 'FT-301', kind: 'dp-flow', service: 'Air ring header flow', location: 'Compressed-air ring, compressor hall', lrv: 0, urv: 50, unit: 'kPa', outputMode: 'sqrt-transmitter', cutoffMode: 'clamp', cutoffValue: 8, tolerancePct: 0.75, intervalDays: 365, lastAgoDays: 350 },
  { tag: 'PT-302', kind: 'pressure', service: 'Air ring header pressure', location: 'Compressed-air ring, compressor hall', lrv: 0, urv: 1000, unit: 'kPa', outputMode: 'linear', cutoffMode: 'none', cutoffValue: 0, tolerancePct: 0.5, intervalDays: 365, lastAgoDays: 120 },
  { tag: 'FT-303', kind: 'dp-flow', service: 'Dryer purge flow', location: 'Compressed-air ring, dryer skid', lrv: 0, urv: 40, unit: 'inH2O@68F', outputMode: 'sqrt-transmitter', cutoffMode: 'none', cutoffValue: 0, tolerancePct: 1, intervalDays: 180, lastAgoDays: 185 },
];

/** Seeds the demo site when the database has no site yet; returns whether it seeded. */
export async function seedDemo(db: Db, audit: AuditService, password: string, now = new Date(), hashCost?: number): Promise<boolean> {
  const sites = siteRepository(db);
  if (await sites.get()) return false;
  const today = isoDate(now);
  await sites.create({
    name: DEMO_SITE_NAME,
    domain: DEMO_DOMAIN,
    settings: JSON.stringify({ holdSeconds: 30, decisionRule: 'guard-band' }),
  });
  const users = userRepository(db);
  const hash = await hashPassword(password, hashCost);
  const ids: Record<string, string> = {};
  for (const u of DEMO_USERS) ids[u.role + (u.email.startsWith('tech2') ? '2' : '')] = (await users.create({ ...u, passwordHash: hash })).id;

  const instruments = instrumentRepository(db);
  const tagIds: Record<string, string> = {};
  for (const { lastAgoDays, ...i } of INSTRUMENTS) {
    tagIds[i.tag] = (await instruments.create({ ...i, lastCalibratedOn: addDays(today, -lastAgoDays) })).id;
  }

  const standards = standardRepository(db);
  const std = (dueInDays: number) => ({ calibratedOn: addDays(today, dueInDays - 365), dueOn: addDays(today, dueInDays) });
  await standards.create({ kind: 'pressure', description: 'Portable pressure calibrator, 0–100 kPa module', serial: 'QDU-PC-0417', rangeMin: -100, rangeMax: 100, unit: 'kPa', accuracy: { pctReading: 0.015, pctFullScale: 0.005, floor: 0, certificateU: null, certificateK: null }, resolution: 0.001, certificateNo: 'QCL-24-1187', calibratingLab: 'Quillon Calibration Laboratory', ...std(210) });
  await standards.create({ kind: 'pressure', description: 'Portable pressure calibrator, 0–2 MPa module', serial: 'QDU-PC-0952', rangeMin: 0, rangeMax: 2000, unit: 'kPa', accuracy: { pctReading: 0.02, pctFullScale: 0.005, floor: 0, certificateU: null, certificateK: null }, resolution: 0.01, certificateNo: 'QCL-24-1402', calibratingLab: 'Quillon Calibration Laboratory', ...std(18) });
  await standards.create({ kind: 'current', description: 'Bench multimeter, 6½ digit', serial: 'QDU-MM-0031', rangeMin: 0, rangeMax: 30, unit: 'mA', accuracy: { pctReading: 0.05, pctFullScale: 0, floor: 0.002, certificateU: null, certificateK: null }, resolution: 0.0001, certificateNo: 'QCL-24-0877', calibratingLab: 'Quillon Calibration Laboratory', ...std(290) });
  await standards.create({ kind: 'current', description: 'Handheld loop meter', serial: 'QDU-MM-0118', rangeMin: 0, rangeMax: 24, unit: 'mA', accuracy: { pctReading: 0.01, pctFullScale: 0, floor: 0.002, certificateU: null, certificateK: null }, resolution: 0.001, certificateNo: 'QCL-23-0650', calibratingLab: 'Quillon Calibration Laboratory', ...std(-21) });

  const jobs = jobRepository(db);
  const job = async (tag: string, assignee: string | null, dueOn: string) =>
    jobs.create({ instrumentId: tagIds[tag]!, assigneeId: assignee, createdBy: ids.lead!, dueOn });
  for (const { lastAgoDays, tag, intervalDays } of INSTRUMENTS) {
    const due = addDays(today, intervalDays - lastAgoDays);
    if (intervalDays - lastAgoDays > 45) continue;
    const assignee = tag === 'FT-101' || tag === 'FT-102' || tag === 'LT-220' ? ids.technician! : tag === 'FT-301' ? ids.technician2! : null;
    await job(tag, assignee, due);
  }
  await audit.record(null, 'site.seeded', 'site', null, undefined, { site: DEMO_SITE_NAME, users: DEMO_USERS.length, instruments: INSTRUMENTS.length });
  // Past calibrations (drift, records, certificates) and the PT-302 job waiting for review with its trace.
  await seedDemoHistory(db, { audit, now });
  return true;
}
