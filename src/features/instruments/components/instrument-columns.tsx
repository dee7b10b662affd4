import { Link } from 'react-router';
import type { Instrument, OutputMode } from '../../../../shared/schemas/instruments';
import { Badge } from '../../../components/ui/badge';
import type { RegisterColumn } from '../../../components/registers/server-table';
import { daysUntil, formatNumber, formatRange, relativeDays } from '../../../lib/format';

export const OUTPUT_MODE_LABELS: Record<OutputMode, string> = {
  linear: 'Linear',
  'sqrt-transmitter': '√ in transmitter',
  'sqrt-host': '√ in host',
};

const dash = <span className="text-ink-faint">—</span>;

/** Columns of the instrument register; sort keys are those the server sorts by. */
export const INSTRUMENT_COLUMNS: RegisterColumn<Instrument>[] = [
  { id: 'tag', header: 'Tag', sortKey: 'tag', cell: (i) => <span className="num font-semibold whitespace-nowrap text-ink">{i.tag}</span> },
  { id: 'kind', header: 'Kind', optional: true, cell: (i) => i.kind },
  { id: 'service', header: 'Service', sortKey: 'service', cell: (i) => i.service || dash },
  { id: 'location', header: 'Location', sortKey: 'location', cell: (i) => i.location || dash },
  { id: 'range', header: 'Range', cell: (i) => <span className="num whitespace-nowrap">{formatRange(i.lrv, i.urv, i.unit)}</span> },
  { id: 'output', header: 'Output', sortKey: 'outputMode', cell: (i) => <span className="whitespace-nowrap">{OUTPUT_MODE_LABELS[i.outputMode]}</span> },
  { id: 'cutoff', header: 'Cutoff', optional: true, cell: (i) => (i.cutoffMode === 'none' ? dash : `${i.cutoffMode} ${formatNumber(i.cutoffValue)} %`) },
  { id: 'tolerance', header: 'Tolerance', numeric: true, cell: (i) => `±${formatNumber(i.tolerancePct, 3)} %` },
  { id: 'interval', header: 'Interval', sortKey: 'intervalDays', numeric: true, cell: (i) => `${i.intervalDays} d` },
  { id: 'last', header: 'Last calibrated', sortKey: 'lastCalibratedOn', optional: true, cell: (i) => <span className="num">{i.lastCalibratedOn ?? '—'}</span> },
  {
    id: 'nextDue',
    header: 'Next due',
    cell: (i) => {
      if (!i.nextDueOn) return <span className="text-ink-faint">Not scheduled</span>;
      const d = daysUntil(i.nextDueOn);
      return (
        <div className="flex items-center gap-2 whitespace-nowrap">
          <span className="num">{i.nextDueOn}</span>
          {d < 0 ? <Badge tone="danger">Overdue</Badge> : d <= 30 ? <Badge tone="warn">{relativeDays(d)}</Badge> : null}
        </div>
      );
    },
  },
  { id: 'drift', header: 'Drift', cell: (i) => <Link className="text-accent hover:underline" to={`/instruments/${i.id}/drift`}>History</Link> },
  { id: 'notes', header: 'Notes', optional: true, cell: (i) => i.notes || dash },
];
