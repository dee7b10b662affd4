import { useMemo } from 'react';
import type { Instrument, OutputMode } from '../../../../shared/schemas/instruments';
import { Badge } from '../../../components/ui/badge';
import { DataTable, type ColumnDef } from '../../../components/ui/table';
import { daysUntil, formatDate, formatNumber, formatRange, relativeDays } from '../../../lib/format';

export const OUTPUT_MODE_LABELS: Record<OutputMode, string> = {
  linear: 'Linear',
  'sqrt-transmitter': '√ in transmitter',
  'sqrt-host': '√ in host',
};

export interface InstrumentsTableProps {
  instruments: readonly Instrument[];
  search?: string;
  /** Today's date (YYYY-MM-DD) for tests; defaults to today in the site's zone. */
  today?: string;
}

/** Text a search matches against: tag, service, location, unit and output mode. */
function searchText(i: Instrument): string {
  return [i.tag, i.service, i.location, i.unit, OUTPUT_MODE_LABELS[i.outputMode], i.kind].join(' ').toLowerCase();
}

export function InstrumentsTable({ instruments, search = '', today }: InstrumentsTableProps) {
  const columns = useMemo<ColumnDef<Instrument>[]>(
    () => [
      {
        accessorKey: 'tag',
        header: 'Tag',
        cell: ({ row }) => <span className="num font-semibold whitespace-nowrap text-ink">{row.original.tag}</span>,
      },
      { accessorKey: 'service', header: 'Service', cell: ({ getValue }) => getValue<string>() || <span className="text-ink-faint">—</span> },
      { accessorKey: 'location', header: 'Location', cell: ({ getValue }) => getValue<string>() || <span className="text-ink-faint">—</span> },
      {
        id: 'range',
        header: 'Range',
        accessorFn: (i) => i.urv - i.lrv,
        cell: ({ row }) => <span className="num whitespace-nowrap">{formatRange(row.original.lrv, row.original.urv, row.original.unit)}</span>,
      },
      {
        accessorKey: 'outputMode',
        header: 'Output',
        cell: ({ row }) => <span className="whitespace-nowrap">{OUTPUT_MODE_LABELS[row.original.outputMode]}</span>,
      },
      {
        accessorKey: 'tolerancePct',
        header: 'Tolerance',
        meta: { numeric: true },
        cell: ({ row }) => `±${formatNumber(row.original.tolerancePct, 3)} %`,
      },
      {
        accessorKey: 'intervalDays',
        header: 'Interval',
        meta: { numeric: true },
        cell: ({ row }) => `${row.original.intervalDays} d`,
      },
      {
        id: 'nextDue',
        header: 'Next due',
        accessorFn: (i) => i.nextDueOn ?? '9999-12-31',
        cell: ({ row }) => {
          const due = row.original.nextDueOn;
          if (!due) return <span className="text-ink-faint">Not scheduled</span>;
          const d = daysUntil(due, today);
          return (
            <div className="flex items-center gap-2 whitespace-nowrap">
              <span className="num">{formatDate(due)}</span>
              {d < 0 ? (
                <Badge tone="danger">Overdue</Badge>
              ) : d <= 30 ? (
                <Badge tone="warn">{relativeDays(d)}</Badge>
              ) : null}
            </div>
          );
        },
      },
    ],
    [today],
  );

  return (
    <DataTable
      caption="Instrument register"
      data={instruments}
      columns={columns}
      globalFilter={search}
      globalFilterFn={(row, _c, value: string) => searchText(row.original).includes(value.trim().toLowerCase())}
      initialSorting={[{ id: 'tag', desc: false }]}
      getRowId={(i) => i.id}
      empty={search ? `No instruments match “${search}”.` : 'No instruments registered yet.'}
    />
  );
}
