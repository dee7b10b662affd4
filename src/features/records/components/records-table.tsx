import { useMemo } from 'react';
import { Link } from 'react-router';
import type { RecordItem } from '../../../../shared/schemas/records';
import { Badge } from '../../../components/ui/badge';
import { DataTable, type ColumnDef } from '../../../components/ui/table';
import { formatDate } from '../../../lib/format';

const RESULT_WORDS: Record<string, string> = { pass: 'Pass', fail: 'Fail', 'conditional-pass': 'Conditional pass', 'conditional-fail': 'Conditional fail' };
const RESULT_TONES: Record<string, 'ok' | 'danger' | 'warn'> = { pass: 'ok', fail: 'danger', 'conditional-pass': 'warn', 'conditional-fail': 'warn' };

/** An overall result in words with a tone; a dash when the run was not done (an as-left after a pass). */
function Result({ decision }: { decision: string | null }) {
  if (!decision) return <span className="text-ink-faint">—</span>;
  return <Badge tone={RESULT_TONES[decision] ?? 'neutral'}>{RESULT_WORDS[decision] ?? decision}</Badge>;
}

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
      {
        id: 'calibrated',
        header: 'Calibrated',
        accessorFn: (r) => r.calibratedOn ?? '',
        cell: ({ row }) => (row.original.calibratedOn ? <span className="num whitespace-nowrap">{formatDate(row.original.calibratedOn)}</span> : <span className="text-ink-faint">—</span>),
      },
      { id: 'asFound', header: 'As found', accessorFn: (r) => r.asFound ?? '', cell: ({ row }) => <Result decision={row.original.asFound ?? null} /> },
      { id: 'asLeft', header: 'As left', accessorFn: (r) => r.asLeft ?? '', cell: ({ row }) => <Result decision={row.original.asLeft ?? null} /> },
      { accessorKey: 'revision', header: 'Rev.', meta: { numeric: true } },
      { accessorKey: 'assigneeName', header: 'Performed by', cell: ({ getValue }) => getValue<string | null>() ?? '—' },
      {
        id: 'signed',
        header: 'Last signature',
        accessorFn: (r) => r.lastSignature?.signedAt ?? '',
        cell: ({ row }) => {
          const s = row.original.lastSignature;
          return s ? (
            <span title={`${s.signerName}, ${formatDate(s.signedAt)} (${s.meaning})`}>
              {s.signerName}
              <span className="block text-xs text-ink-muted">
                <span className="num">{formatDate(s.signedAt)}</span> · {s.decision === 'approve' ? 'approved' : 'returned'}
              </span>
            </span>
          ) : (
            <span className="text-ink-faint">Awaiting review</span>
          );
        },
      },
      { accessorKey: 'revisions', header: 'Earlier rev.', meta: { numeric: true } },
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
      initialSorting={[{ id: 'calibrated', desc: true }]}
      getRowId={(r) => r.id}
      stackOnPhone
      empty={search ? `No records match “${search}”.` : 'No submitted or approved records yet.'}
    />
  );
}
