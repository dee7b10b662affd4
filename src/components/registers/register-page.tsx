import { useDeferredValue, useState, type ComponentType, type ReactNode } from 'react';
import { registerPath, searchPrompt } from '../../../shared/schemas/registers';
import { ATTACHMENT_SPECS, AttachmentList } from '../ui/attachments';
import { Button } from '../ui/button';
import { Dialog } from '../ui/dialog';
import { ErrorNotice } from '../ui/error-notice';
import { PageHeader } from '../ui/page-header';
import { SearchInput } from '../ui/search-input';
import { ListSkeleton } from '../ui/skeleton';
import { toast } from '../ui/toast';
import type { RegisterApi } from '../../lib/register-api';
import { CsvImportDialog } from './csv-import-dialog';
import type { RegisterFormSlotProps } from './register-form';
import { ServerTable, type RegisterColumn, type SortState } from './server-table';

/** What one register (instruments, standards) puts into the shared page beside its spec and API. */
export interface RegisterPageConfig<T extends { id: string }, I> {
  /** The register's API; its spec names the page, the search box, the first sort, the CSV layout and the files. */
  api: RegisterApi<T, I>;
  description: (total: number | undefined) => ReactNode;
  columns: RegisterColumn<T>[];
  /** The files dialog's line about a row. */
  aboutFiles: (row: T) => string;
  /** The add and edit form. */
  Form: ComponentType<RegisterFormSlotProps<T>>;
  /** Shown above the table once the list has loaded (the standards' due counts over the whole register). */
  summary?: ReactNode;
}

const PAGE_SIZE = 25;

const capitalise = (w: string) => w.charAt(0).toUpperCase() + w.slice(1);

/** Column names for the import dialog: a group of `prefix.field` columns is shown once as `prefix.*`. */
export function csvColumnNames(columns: readonly string[]): string[] {
  return [...new Set(columns.map((c) => (c.includes('.') ? `${c.slice(0, c.indexOf('.'))}.*` : c)))];
}

/**
 * One register page: a server-paged, searchable table with CSV export, and for those who may edit
 * it (`canEdit`) CSV import, add and edit forms; every row opens its files.
 */
export function RegisterPage<T extends { id: string }, I>({ config, canEdit }: { config: RegisterPageConfig<T, I>; canEdit: boolean }) {
  const { Form, ...c } = config;
  const { spec } = c.api;
  const { noun, plural: nouns } = spec;
  const title = capitalise(nouns);
  const registerName = `${title} register`;
  const apiPath = registerPath(spec);
  const files = ATTACHMENT_SPECS[spec.files];
  const filesLabel = `${capitalise(files.noun)}s`;
  const rowName = (row: T) => String(row[spec.keyField]);
  const [search, setSearch] = useState('');
  const q = useDeferredValue(search);
  const [sort, setSort] = useState<SortState>({ sort: spec.sortable[0], dir: 'asc' });
  const [page, setPage] = useState(1);
  const list = c.api.useList({ q, ...sort, page, pageSize: PAGE_SIZE });
  const [editing, setEditing] = useState<T | 'new' | null>(null);
  const [importing, setImporting] = useState(false);
  const [filesOf, setFilesOf] = useState<T | null>(null);
  const table = list.data && (
    <ServerTable
      caption={registerName}
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
          <Button size="sm" variant="ghost" onClick={() => setFilesOf(row)} aria-label={`${filesLabel} of ${rowName(row)}`}>
            {filesLabel}
          </Button>
          {canEdit && (
            <Button size="sm" variant="ghost" onClick={() => setEditing(row)} aria-label={`Edit ${rowName(row)}`}>
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
        title={title}
        // The register's size, not a search's: while searching, the description goes without it.
        description={c.description(q ? undefined : list.data?.total)}
        actions={
          <div className="flex flex-wrap items-center gap-2">
            <SearchInput
              label={`Search ${nouns}`}
              placeholder={searchPrompt(spec)}
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
                  Add {noun}
                </Button>
              </>
            )}
          </div>
        }
      />
      {list.isPending ? (
        <ListSkeleton />
      ) : list.isError ? (
        <ErrorNotice title={`Could not load the ${registerName.toLowerCase()}`} error={list.error} onRetry={() => void list.refetch()} />
      ) : c.summary && list.data ? (
        <div className="flex flex-col gap-6">
          {c.summary}
          {table}
        </div>
      ) : (
        table
      )}
      <Dialog
        open={editing !== null}
        onClose={() => setEditing(null)}
        title={editing === 'new' ? `New ${noun}` : `Edit ${editing ? rowName(editing) : ''}`}
        className="w-[min(48rem,calc(100vw-2rem))]"
      >
        {editing !== null && (
          <Form
            row={editing === 'new' ? null : editing}
            onCancel={() => setEditing(null)}
            onSaved={(row) => {
              setEditing(null);
              toast(`${rowName(row)} saved`, { tone: 'success' });
            }}
          />
        )}
      </Dialog>
      <Dialog
        open={!!filesOf}
        onClose={() => setFilesOf(null)}
        title={`${filesLabel} of ${filesOf ? rowName(filesOf) : ''}`}
        description={filesOf ? c.aboutFiles(filesOf) : undefined}
        className="w-[min(40rem,calc(100vw-2rem))]"
      >
        {filesOf && (
          <AttachmentList
            target={{ entity: noun, id: filesOf.id }}
            spec={files}
            canUpload={canEdit}
            canRemove={canEdit}
            emptyText={`No ${files.noun} uploaded.`}
            testId={`${noun}-${filesLabel.toLowerCase()}`}
          />
        )}
      </Dialog>
      <CsvImportDialog
        open={importing}
        onClose={() => setImporting(false)}
        endpoint={`${apiPath}/import`}
        title={`Import ${nouns} from CSV`}
        columns={csvColumnNames(spec.csvColumns)}
        onImported={(n) => {
          setImporting(false);
          toast(`${n} ${nouns} imported`, { tone: 'success' });
          void list.refetch();
        }}
      />
    </>
  );
}
