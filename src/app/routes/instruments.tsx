import type { QueryClient } from '@tanstack/react-query';
import { useDeferredValue, useState } from 'react';
import type { Instrument } from '../../../shared/schemas/instruments';
import { CsvImportDialog } from '../../components/registers/csv-import-dialog';
import { ServerTable, type SortState } from '../../components/registers/server-table';
import { Button } from '../../components/ui/button';
import { Dialog } from '../../components/ui/dialog';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { SearchInput } from '../../components/ui/search-input';
import { ListSkeleton } from '../../components/ui/skeleton';
import { toast } from '../../components/ui/toast';
import { useMe } from '../../features/auth/api/get-me';
import { instrumentsQueryOptions, useInstruments } from '../../features/instruments/api/get-instruments';
import { INSTRUMENT_COLUMNS } from '../../features/instruments/components/instrument-columns';
import { InstrumentForm } from '../../features/instruments/components/instrument-form';
import { canEditRegisters } from '../../lib/authorization';
import { DatasheetDialog } from '../../features/instruments/components/datasheet-dialog';
import { RouteErrorBoundary } from './route-error';

export const createLoader = (queryClient: QueryClient) => () => {
  void queryClient.prefetchQuery(instrumentsQueryOptions());
  return null;
};

const PAGE_SIZE = 25;
const CSV_COLUMNS = ['tag', 'kind', 'service', 'location', 'lrv', 'urv', 'unit', 'outputMode', 'cutoffMode', 'cutoffValue', 'tolerancePct', 'intervalDays', 'lastCalibratedOn', 'notes', 'pe.*'];

export function Component() {
  const me = useMe().data;
  const [search, setSearch] = useState('');
  const q = useDeferredValue(search);
  const [sort, setSort] = useState<SortState>({ sort: 'tag', dir: 'asc' });
  const [page, setPage] = useState(1);
  const list = useInstruments({ q, ...sort, page, pageSize: PAGE_SIZE });
  const [editing, setEditing] = useState<Instrument | 'new' | null>(null);
  const [importing, setImporting] = useState(false);
  const [datasheets, setDatasheets] = useState<Instrument | null>(null);
  const canEdit = !!me && canEditRegisters(me.role);
  return (
    <>
      <PageHeader
        title="Instruments"
        description={
          list.data ? (
            <>
              The transmitter register: <span className="num">{list.data.total}</span> tags with their ranges, output modes, tolerances and intervals.
            </>
          ) : (
            'The transmitter register.'
          )
        }
        actions={
          <div className="flex flex-wrap items-center gap-2">
            <SearchInput
              label="Search instruments"
              placeholder="Search tag, service, location…"
              value={search}
              onValueChange={(v) => {
                setSearch(v);
                setPage(1);
              }}
            />
            <a href="/api/instruments/export.csv" className="inline-flex h-9 items-center rounded-md border border-line-strong px-3 text-sm hover:bg-sunken" download>
              Export CSV
            </a>
            {canEdit && (
              <>
                <Button variant="secondary" size="sm" onClick={() => setImporting(true)}>
                  Import CSV
                </Button>
                <Button size="sm" onClick={() => setEditing('new')}>
                  Add instrument
                </Button>
              </>
            )}
          </div>
        }
      />
      {list.isPending ? (
        <ListSkeleton />
      ) : list.isError ? (
        <ErrorNotice title="Could not load the instrument register" error={list.error} onRetry={() => void list.refetch()} />
      ) : (
        <ServerTable
          caption="Instrument register"
          storageKey="sp.columns.instruments"
          columns={INSTRUMENT_COLUMNS}
          rows={list.data.items}
          rowKey={(i) => i.id}
          total={list.data.total}
          page={page}
          pageSize={PAGE_SIZE}
          sort={sort}
          onSort={(s) => {
            setSort(s);
            setPage(1);
          }}
          onPage={setPage}
          loading={list.isFetching}
          empty={q ? `No instruments match “${q}”.` : 'No instruments registered yet.'}
          rowActions={(i) => (
            <>
              <Button size="sm" variant="ghost" onClick={() => setDatasheets(i)} aria-label={`Datasheets of ${i.tag}`}>
                Datasheets
              </Button>
              {canEdit && (
                <Button size="sm" variant="ghost" onClick={() => setEditing(i)} aria-label={`Edit ${i.tag}`}>
                  Edit
                </Button>
              )}
            </>
          )}
        />
      )}
      <Dialog open={editing !== null} onClose={() => setEditing(null)} title={editing === 'new' ? 'New instrument' : `Edit ${editing?.tag ?? ''}`} className="w-[min(48rem,calc(100vw-2rem))]">
        {editing !== null && (
          <InstrumentForm
            instrument={editing === 'new' ? null : editing}
            onCancel={() => setEditing(null)}
            onSaved={(i) => {
              setEditing(null);
              toast(`${i.tag} saved`, { tone: 'success' });
            }}
          />
        )}
      </Dialog>
      <DatasheetDialog instrument={datasheets} canEdit={canEdit} onClose={() => setDatasheets(null)} />
      <CsvImportDialog
        open={importing}
        onClose={() => setImporting(false)}
        endpoint="/api/instruments/import"
        title="Import instruments from CSV"
        columns={CSV_COLUMNS}
        onImported={(n) => {
          setImporting(false);
          toast(`${n} instruments imported`, { tone: 'success' });
          void list.refetch();
        }}
      />
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
