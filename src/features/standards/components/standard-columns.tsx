import type { AccuracySpec, Standard } from '../../../../shared/schemas/standards';
import type { RegisterColumn } from '../../../components/registers/server-table';
import { daysUntil, formatNumber, formatRange, uncertaintyLabel, unitLabel } from '../../../lib/format';
import { CertificateCell } from './certificate-cell';
import { DueStateBadge } from './due-state-badge';

/** "±(0.02 % rdg + 0.01 % FS + 0.001 kPa)" or "U (k=2) = 0.05 kPa", units in their one spelling. */
export function formatAccuracy(a: AccuracySpec, unitId: string): string {
  const unit = unitLabel(unitId);
  if (a.certificateU !== null) return `${uncertaintyLabel(a.certificateK)} = ${formatNumber(a.certificateU)} ${unit}`;
  const parts: string[] = [];
  if (a.pctReading) parts.push(`${formatNumber(a.pctReading)} % rdg`);
  if (a.pctFullScale) parts.push(`${formatNumber(a.pctFullScale)} % FS`);
  if (a.floor) parts.push(`${formatNumber(a.floor)} ${unit}`);
  return parts.length ? `±(${parts.join(' + ')})` : '—';
}

export const STANDARD_COLUMNS: RegisterColumn<Standard>[] = [
  { id: 'description', header: 'Standard', sortKey: 'description', cell: (s) => <span className="font-medium">{s.description}</span> },
  { id: 'kind', header: 'Kind', sortKey: 'kind', cell: (s) => (s.kind === 'pressure' ? 'Pressure' : 'Current') },
  { id: 'serial', header: 'Serial', sortKey: 'serial', cell: (s) => <span className="num">{s.serial}</span> },
  { id: 'range', header: 'Range', cell: (s) => <span className="num whitespace-nowrap">{formatRange(s.rangeMin, s.rangeMax, s.unit)}</span> },
  { id: 'accuracy', header: 'Accuracy', cell: (s) => <span className="num">{formatAccuracy(s.accuracy, s.unit)}</span> },
  { id: 'resolution', header: 'Resolution', optional: true, numeric: true, cell: (s) => formatNumber(s.resolution, 6) },
  { id: 'certificate', header: 'Certificate', cell: (s) => <CertificateCell standard={s} /> },
  { id: 'calibrated', header: 'Calibrated', optional: true, cell: (s) => <span className="num">{s.calibratedOn}</span> },
  {
    id: 'due',
    header: 'Due',
    sortKey: 'dueOn',
    cell: (s) => (
      <div className="flex items-center gap-2 whitespace-nowrap">
        <span className="num">{s.dueOn}</span>
        <DueStateBadge state={s.dueState} />
        {s.dueState !== 'in-date' && <span className="text-xs text-ink-muted">{daysUntil(s.dueOn) < 0 ? `${-daysUntil(s.dueOn)} d ago` : `in ${daysUntil(s.dueOn)} d`}</span>}
      </div>
    ),
  },
];
