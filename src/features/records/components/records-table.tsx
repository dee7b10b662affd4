import { useMemo } from 'react';
import { Link } from 'react-router';
import type { RecordItem } from '../../../../shared/schemas/records';
import { Badge } from '../../../components/ui/badge';
import { DataTable, type ColumnDef } from '../../../components/ui/table';
import { formatDate } from '../../../lib/format';

/** Submitted and approved records with links to review, certificate and drift. */
export function RecordsTable({ records, search }: { records: RecordItem[]; search: string }) {
  const columns = useMemo<ColumnDef<RecordItem>[]>(
    () => [
      { accessorKey: 'tag', header: 'Tag', cell: ({ row }) => <span className="num font-semibold">{row.original.tag}</span> },
      {
        accessorKey: 'status',
        header: 'Status',
        cell: ({ row }) => (
          <Badge tone={row.original.status === 'approved' ? 'ok' : row.original.status === 'submitted' ? 'accent' : row.original.status === 'returned' ? 'warn' : 'info'} dot>
            {row.original.status}
          </Badge>
        ),
      },
      { accessorKey: 'revision', header: 'Rev.', meta: { numeric: true } },
      { accessorKey: 'assigneeName', header: 'Performed by', cell: ({ getValue }) => getValue<string | null>() ?? '—' },
      {
        id: 'signed',
        header: 'Last signature',
        accessorFn: (r) => r.lastSignature?.signedAt ?? '',
        cell: ({ row }) => {
          const s = row.original.lastSignature;
          return s ? (
            <span>
              {s.signerName}, <span className="num">{formatDate(s.signedAt)}</span> <span className="text-ink-muted">({s.meaning})</span>
            </span>
          ) : (
            <span className="text-ink-faint">Awaiting review</span>
          );
        },
      },
      { accessorKey: 'revisions', header: 'Earlier revisions', meta: { numeric: true } },
      {
        id: 'links',
        header: '',
        enableSorting: false,
        cell: ({ row }) => (
          <div className="flex gap-3 whitespace-nowrap">
            <Link className="text-accent hover:underline" to={`/jobs/${row.original.id}/review`}>
              Review
            </Link>
            {row.original.status === 'approved' && (
              <a className="text-accent hover:underline" href={`/api/jobs/${row.original.id}/certificate.pdf`}>
                Certificate
              </a>
            )}
            <Link className="text-accent hover:underline" to={`/instruments/${row.original.instrumentId}/drift`}>
              Drift
            </Link>
          </div>
        ),
      },
    ],
    [],
  );
  return (
    <DataTable
      caption="Calibration records"
      data={records}
      columns={columns}
      globalFilter={search}
      initialSorting={[{ id: 'signed', desc: true }]}
      getRowId={(r) => r.id}
      empty={search ? `No records match “${search}”.` : 'No submitted or approved records yet.'}
    />
  );
}
