import type { Standard } from '../../../shared/schemas/standards';
import { STANDARD_COLUMNS as STANDARD_CSV_COLUMNS } from '../../../shared/schemas/register-csv';
import type { RegisterPageConfig } from '../../components/registers/register-page';
import { CERTIFICATE } from '../../components/ui/attachments';
import { Stat } from '../../components/ui/stat';
import { standardsQueryOptions, useStandardDueCounts, useStandards } from '../../features/standards/api/get-standards';
import { STANDARD_COLUMNS } from '../../features/standards/components/standard-columns';
import { StandardForm } from '../../features/standards/components/standard-form';
import { registerRoute } from './register-route';

/** The register's size and how many standards are due soon or expired. */
function DueCounts({ total }: { total: number }) {
  const counts = useStandardDueCounts().data;
  return (
    <dl className="grid grid-cols-3 gap-3 sm:max-w-xl">
      <Stat label="Standards" value={total} />
      <Stat label="Due soon" value={counts?.dueSoon ?? 0} tone={counts?.dueSoon ? 'warn' : undefined} />
      <Stat label="Expired" value={counts?.expired ?? 0} tone={counts?.expired ? 'danger' : undefined} />
    </dl>
  );
}

const STANDARDS: RegisterPageConfig<Standard> = {
  title: 'Standards',
  description: () => 'Reference standards used on the bench. An expired standard cannot be used for a run; one due within 30 days is flagged.',
  noun: 'standard',
  registerName: 'Standards register',
  searchPlaceholder: 'Search description, serial, certificate…',
  csvColumns: STANDARD_CSV_COLUMNS,
  initialSort: { sort: 'dueOn', dir: 'asc' },
  columns: STANDARD_COLUMNS,
  rowName: (s) => s.serial,
  useList: useStandards,
  files: {
    label: 'Certificates',
    description: (s) => `${s.description} · certificate ${s.certificateNo}. The newest upload is the standard's certificate; records that used an earlier one keep it.`,
    spec: CERTIFICATE,
  },
  renderForm: ({ row, onSaved, onCancel }) => <StandardForm standard={row} onSaved={onSaved} onCancel={onCancel} />,
  summary: (total) => <DueCounts total={total} />,
};

export const { createLoader, Component, ErrorBoundary } = registerRoute(STANDARDS, (queryClient) => queryClient.prefetchQuery(standardsQueryOptions()));
