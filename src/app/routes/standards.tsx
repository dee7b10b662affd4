import { Stat } from '../../components/ui/stat';
import { standardsApi, useStandardDueCounts } from '../../features/standards/api/get-standards';
import { STANDARD_COLUMNS } from '../../features/standards/components/standard-columns';
import { StandardForm } from '../../features/standards/components/standard-form';
import { registerRoute } from './register-route';

/** The register's size and how many standards are due soon or expired (whatever the search). */
function DueCounts() {
  const counts = useStandardDueCounts().data;
  return (
    <dl className="grid grid-cols-3 gap-3 sm:max-w-xl">
      <Stat label="Standards" value={counts?.total ?? null} />
      <Stat label="Due soon" value={counts?.dueSoon ?? null} tone={counts?.dueSoon ? 'warn' : undefined} />
      <Stat label="Expired" value={counts?.expired ?? null} tone={counts?.expired ? 'danger' : undefined} />
    </dl>
  );
}

export const { createLoader, Component, ErrorBoundary } = registerRoute({
  api: standardsApi,
  description: () => 'Reference standards used on the bench. An expired standard cannot be used for a run; one due within 30 days is flagged.',
  columns: STANDARD_COLUMNS,
  aboutFiles: (s) => `${s.description} · certificate ${s.certificateNo}. The newest upload is the standard's certificate; records that used an earlier one keep it.`,
  Form: StandardForm,
  summary: <DueCounts />,
});
