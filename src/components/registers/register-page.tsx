import type { UseQueryResult } from '@tanstack/react-query';
import { useDeferredValue, useState, type ReactNode } from 'react';
import { AttachmentList, type AttachmentKindSpec } from '../ui/attachments';
import { Button } from '../ui/button';
import { Dialog } from '../ui/dialog';
import { ErrorNotice } from '../ui/error-notice';
import { PageHeader } from '../ui/page-header';
import { SearchInput } from '../ui/search-input';
import { ListSkeleton } from '../ui/skeleton';
import { toast } from '../ui/toast';
import type { AttachmentTarget } from '../../lib/attachments';
import { CsvImportDialog } from './csv-import-dialog';
import { ServerTable, type RegisterColumn, type SortState } from './server-table';

/** Search, sort and page of a register list, as the server takes them. */
export interface RegisterListParams extends SortState {
  q: string;
  page: number;
  pageSize: number;
}

/** The files kept beside each row (an instrument's datasheets, a standard's certificates). */
export interface RegisterFiles<T> {
  /** The row button and the dialog's title start: "Datasheets", "Certificates". */
  label: string;
  description: (row: T) => string;
  spec: AttachmentKindSpec;
}

/** What one register (instruments, standards) puts into the shared page. */
export interface RegisterPageConfig<T extends { id: string }> {
  title: string;
  description: (total: number | undefined) => ReactNode;
  /**
   * What one row is ("instrument"): its files are kept under it, and its plural names the API
   * path (`/api/instruments`) and the remembered columns.
   */
  noun: Exclude<AttachmentTarget['entity'], 'job'>;
  /** The register's name in captions and errors: "Instrument register". */
  registerName: string;
  searchPlaceholder: string;
  /** The CSV layout (shared with the server); grouped columns (`pe.…`) are named once as `pe.*`. */
  csvColumns: readonly string[];
  initialSort: SortState;
  columns: RegisterColumn<T>[];
  /** How a row is named in titles, toasts and button labels (its tag or serial). */
  rowName: (row: T) => string;
  useList: (params: RegisterListParams) => UseQueryResult<{ items: T[]; total: number }>;
  files: RegisterFiles<T>;
  renderForm: (props: { row: T | null; onSaved: (row: T) => void; onCancel: () => void }) => ReactNode;
  /** Shown above the table once the list has loaded (the standards' due counts). */
  summary?: (total: number) => ReactNode;
}

const PAGE_SIZE = 25;

/** Column names for the import dialog: a group of `prefix.field` columns is shown once as `prefix.*`. */
export function csvColumnNames(columns: readonly string[]): string[] {
  return [...new Set(columns.map((c) => (c.includes('.') ? `${c.slice(0, c.indexOf('.'))}.*` : c)))];
}

/**
 * One register page: a server-paged, searchable table with CSV export, and for those who may edit
 * it (`canEdit`) CSV import, add and edit forms; every row opens its files.
 */
export function RegisterPage<T extends { id: string }>({ config, canEdit }: { config: RegisterPageConfig<T>; canEdit: boolean }) {
  const c = config;
  const nouns = `${c.noun}s`;
  const apiPath = `/api/${nouns}`;
  const [search, setSearch] = useState('');
  const q = useDeferredValue(search);
  const [sort, setSort] = useState<SortState>(c.initialSort);
  const [page, setPage] = useState(1);
  const list = c.useList({ q, ...sort, page, pageSize: PAGE_SIZE });
  const [editing, setEditing] = useState<T | 'new' | null>(null);
  const [importing, setImporting] = useState(false);
  const [filesOf, setFilesOf] = useState<T | null>(null);
  const table = list.data && (
    <ServerTable
      caption={c.registerName}
      storageKey={`sp.columns.${nouns}`}
      columns={c.columns}
      rows={list.data.items}
      rowKey={(row) => row.id}
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
      empty={q ? `No ${nouns} match “${q}”.` : `No ${nouns} registered yet.`}
      rowActions={(row) => (
        <>
          <Button size="sm" variant="ghost" onClick={() => setFilesOf(row)} aria-label={`${c.files.label} of ${c.rowName(row)}`}>
            {c.files.label}
          </Button>
          {canEdit && (
            <Button size="sm" variant="ghost" onClick={() => setEditing(row)} aria-label={`Edit ${c.rowName(row)}`}>
              Edit
            </Button>
          )}
        </>
      )}
    />
  );
  return (
    <>
      <PageHeader
        title={c.title}
        description={c.description(list.data?.total)}
        actions={
          <div className="flex flex-wrap items-center gap-2">
            <SearchInput
              label={`Search ${nouns}`}
              placeholder={c.searchPlaceholder}
              value={search}
              onValueChange={(v) => {
                setSearch(v);
                setPage(1);
              }}
            />
            <a href={`${apiPath}/export.csv`} className="inline-flex h-9 items-center rounded-md border border-line-strong px-3 text-sm hover:bg-sunken" download>
              Export CSV
            </a>
            {canEdit && (
              <>
                <Button variant="secondary" size="sm" onClick={() => setImporting(true)}>
                  Import CSV
                </Button>
                <Button size="sm" onClick={() => setEditing('new')}>
                  Add {c.noun}
                </Button>
              </>
            )}
          </div>
        }
      />
      {list.isPending ? (
        <ListSkeleton />
      ) : list.isError ? (
        <ErrorNotice title={`Could not load the ${c.registerName.toLowerCase()}`} error={list.error} onRetry={() => void list.refetch()} />
      ) : c.summary && list.data ? (
        <div className="flex flex-col gap-6">
          {c.summary(list.data.total)}
          {table}
        </div>
      ) : (
        table
      )}
      <Dialog
        open={editing !== null}
        onClose={() => setEditing(null)}
        title={editing === 'new' ? `New ${c.noun}` : `Edit ${editing ? c.rowName(editing) : ''}`}
        className="w-[min(48rem,calc(100vw-2rem))]"
      >
        {editing !== null &&
          c.renderForm({
            row: editing === 'new' ? null : editing,
            onCancel: () => setEditing(null),
            onSaved: (row) => {
              setEditing(null);
              toast(`${c.rowName(row)} saved`, { tone: 'success' });
            },
          })}
      </Dialog>
      <Dialog
        open={!!filesOf}
        onClose={() => setFilesOf(null)}
        title={`${c.files.label} of ${filesOf ? c.rowName(filesOf) : ''}`}
        description={filesOf ? c.files.description(filesOf) : undefined}
        className="w-[min(40rem,calc(100vw-2rem))]"
      >
        {filesOf && (
          <AttachmentList
            target={{ entity: c.noun, id: filesOf.id }}
            spec={c.files.spec}
            canUpload={canEdit}
            canRemove={canEdit}
            emptyText={`No ${c.files.spec.noun} uploaded.`}
            testId={`${c.noun}-${c.files.label.toLowerCase()}`}
          />
        )}
      </Dialog>
      <CsvImportDialog
        open={importing}
        onClose={() => setImporting(false)}
        endpoint={`${apiPath}/import`}
        title={`Import ${nouns} from CSV`}
        columns={csvColumnNames(c.csvColumns)}
        onImported={(n) => {
          setImporting(false);
          toast(`${n} ${nouns} imported`, { tone: 'success' });
          void list.refetch();
        }}
      />
    </>
  );
}
