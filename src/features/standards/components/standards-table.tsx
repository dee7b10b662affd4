import { useMemo } from 'react';
import type { AccuracySpec, DueState, Standard } from '../../../../shared/schemas/standards';
import { DataTable, type ColumnDef } from '../../../components/ui/table';
import { formatNumber, formatRange, uncertaintyLabel, unitLabel } from '../../../lib/format';
import { DueStateBadge } from './due-state-badge';

export interface StandardsTableProps {
  standards: readonly Standard[];
  search?: string;
}

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

const DUE_ORDER: Record<DueState, number> = { expired: 0, 'due-soon': 1, 'in-date': 2 };

export function StandardsTable({ standards, search = '' }: StandardsTableProps) {
  const columns = useMemo<ColumnDef<Standard>[]>(
    () => [
      {
        accessorKey: 'description',
        header: 'Standard',
        cell: ({ row }) => (
          <div>
            <div className="font-medium text-ink">{row.original.description}</div>
            <div className="text-xs text-ink-muted capitalize">{row.original.kind}</div>
          </div>
        ),
      },
      { accessorKey: 'serial', header: 'Serial', cell: ({ getValue }) => <span className="num">{getValue<string>()}</span> },
      {
        id: 'range',
        header: 'Range',
        accessorFn: (s) => s.rangeMax - s.rangeMin,
        cell: ({ row }) => <span className="num whitespace-nowrap">{formatRange(row.original.rangeMin, row.original.rangeMax, row.original.unit)}</span>,
      },
      {
        id: 'accuracy',
        header: 'Accuracy',
        enableSorting: false,
        cell: ({ row }) => <span className="num text-xs whitespace-nowrap">{formatAccuracy(row.original.accuracy, row.original.unit)}</span>,
      },
      { accessorKey: 'certificateNo', header: 'Certificate', cell: ({ getValue }) => <span className="num">{getValue<string>()}</span> },
      { accessorKey: 'calibratedOn', header: 'Calibrated', cell: ({ getValue }) => <span className="num">{getValue<string>()}</span> },
      { accessorKey: 'dueOn', header: 'Due', cell: ({ getValue }) => <span className="num">{getValue<string>()}</span> },
      {
        id: 'dueState',
        header: 'State',
        accessorFn: (s) => DUE_ORDER[s.dueState],
        cell: ({ row }) => <DueStateBadge state={row.original.dueState} />,
      },
    ],
    [],
  );
  return (
    <DataTable
      caption="Reference standards"
      data={standards}
      columns={columns}
      globalFilter={search}
      globalFilterFn={(row, _c, value: string) => {
        const s = row.original;
        return [s.description, s.serial, s.certificateNo, s.kind, s.unit].join(' ').toLowerCase().includes(value.trim().toLowerCase());
      }}
      initialSorting={[{ id: 'dueState', desc: false }]}
      getRowId={(s) => s.id}
      empty={search ? `No standards match “${search}”.` : 'No reference standards registered yet.'}
    />
  );
}
