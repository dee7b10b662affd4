import type { QueryClient } from '@tanstack/react-query';
import { useDeferredValue, useState } from 'react';
import type { Standard } from '../../../shared/schemas/standards';
import { CsvImportDialog } from '../../components/registers/csv-import-dialog';
import { ServerTable, type SortState } from '../../components/registers/server-table';
import { Button } from '../../components/ui/button';
import { Dialog } from '../../components/ui/dialog';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { SearchInput } from '../../components/ui/search-input';
import { ListSkeleton } from '../../components/ui/skeleton';
import { Stat } from '../../components/ui/stat';
import { toast } from '../../components/ui/toast';
import { useMe } from '../../features/auth/api/get-me';
import { standardsQueryOptions, useStandardDueCounts, useStandards } from '../../features/standards/api/get-standards';
import { STANDARD_COLUMNS } from '../../features/standards/components/standard-columns';
import { CertificateDialog } from '../../features/standards/components/certificate-dialog';
import { StandardForm } from '../../features/standards/components/standard-form';
import { canEditRegisters } from '../../lib/authorization';
import { RouteErrorBoundary } from './route-error';

export const createLoader = (queryClient: QueryClient) => () => {
  void queryClient.prefetchQuery(standardsQueryOptions());
  return null;
};

const PAGE_SIZE = 25;
const CSV_COLUMNS = ['kind', 'description', 'serial', 'rangeMin', 'rangeMax', 'unit', 'pctReading', 'pctFullScale', 'floor', 'certificateU', 'certificateK', 'resolution', 'certificateNo', 'calibratedOn', 'dueOn'];

export function Component() {
  const me = useMe().data;
  const [search, setSearch] = useState('');
  const q = useDeferredValue(search);
  const [sort, setSort] = useState<SortState>({ sort: 'dueOn', dir: 'asc' });
  const [page, setPage] = useState(1);
  const list = useStandards({ q, ...sort, page, pageSize: PAGE_SIZE });
  const counts = useStandardDueCounts().data;
  const [editing, setEditing] = useState<Standard | 'new' | null>(null);
  const [importing, setImporting] = useState(false);
  const [certificates, setCertificates] = useState<Standard | null>(null);
  const canEdit = !!me && canEditRegisters(me.role);
  return (
    <>
      <PageHeader
        title="Standards"
        description="Reference standards used on the bench. An expired standard cannot be used for a run; one due within 30 days is flagged."
        actions={
          <div className="flex flex-wrap items-center gap-2">
            <SearchInput
              label="Search standards"
              placeholder="Search description, serial, certificate…"
              value={search}
              onValueChange={(v) => {
                setSearch(v);
                setPage(1);
              }}
            />
            <a href="/api/standards/export.csv" className="inline-flex h-9 items-center rounded-md border border-line-strong px-3 text-sm hover:bg-sunken" download>
              Export CSV
            </a>
            {canEdit && (
              <>
                <Button variant="secondary" size="sm" onClick={() => setImporting(true)}>
                  Import CSV
                </Button>
                <Button size="sm" onClick={() => setEditing('new')}>
                  Add standard
                </Button>
              </>
            )}
          </div>
        }
      />
      {list.isPending ? (
        <ListSkeleton />
      ) : list.isError ? (
        <ErrorNotice title="Could not load the standards register" error={list.error} onRetry={() => void list.refetch()} />
      ) : (
        <div className="flex flex-col gap-6">
          <dl className="grid grid-cols-3 gap-3 sm:max-w-xl">
            <Stat label="Standards" value={list.data.total} />
            <Stat label="Due soon" value={counts?.dueSoon ?? 0} tone={counts?.dueSoon ? 'warn' : undefined} />
            <Stat label="Expired" value={counts?.expired ?? 0} tone={counts?.expired ? 'danger' : undefined} />
          </dl>
          <ServerTable
            caption="Standards register"
            storageKey="sp.columns.standards"
            columns={STANDARD_COLUMNS}
            rows={list.data.items}
            rowKey={(s) => s.id}
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
            empty={q ? `No standards match “${q}”.` : 'No standards registered yet.'}
            rowActions={(s) => (
              <>
                <Button size="sm" variant="ghost" onClick={() => setCertificates(s)} aria-label={`Certificates of ${s.serial}`}>
                  Certificates
                </Button>
                {canEdit && (
                  <Button size="sm" variant="ghost" onClick={() => setEditing(s)} aria-label={`Edit ${s.serial}`}>
                    Edit
                  </Button>
                )}
              </>
            )}
          />
        </div>
      )}
      <Dialog open={editing !== null} onClose={() => setEditing(null)} title={editing === 'new' ? 'New standard' : `Edit ${editing?.serial ?? ''}`} className="w-[min(48rem,calc(100vw-2rem))]">
        {editing !== null && (
          <StandardForm
            standard={editing === 'new' ? null : editing}
            onCancel={() => setEditing(null)}
            onSaved={(s) => {
              setEditing(null);
              toast(`${s.serial} saved`, { tone: 'success' });
            }}
          />
        )}
      </Dialog>
      <CertificateDialog standard={certificates} canEdit={canEdit} onClose={() => setCertificates(null)} />
      <CsvImportDialog
        open={importing}
        onClose={() => setImporting(false)}
        endpoint="/api/standards/import"
        title="Import standards from CSV"
        columns={CSV_COLUMNS}
        onImported={(n) => {
          setImporting(false);
          toast(`${n} standards imported`, { tone: 'success' });
          void list.refetch();
        }}
      />
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
