import type { QueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import type { LoaderFunctionArgs } from 'react-router';
import { Badge } from '../../components/ui/badge';
import { Button } from '../../components/ui/button';
import { ErrorNotice } from '../../components/ui/error-notice';
import { SelectField, TextField } from '../../components/ui/field';
import { PageHeader } from '../../components/ui/page-header';
import { ListSkeleton } from '../../components/ui/skeleton';
import { useAuditTrail, useVerifyAudit } from '../../features/audit/api/get-audit';
import { AuditTable } from '../../features/audit/components/audit-table';
import { requireArea } from '../auth-guard';
import { RouteErrorBoundary } from './route-error';

export const createLoader =
  (queryClient: QueryClient) =>
  ({ request }: LoaderFunctionArgs) =>
    requireArea(queryClient, request, 'audit');

const ENTITIES = ['', 'job', 'run', 'instrument', 'standard', 'user', 'site'];

/** The auditor's view of the trail: browse in chain order, filter by record, verify the hash chain. */
export function Component() {
  const [entity, setEntity] = useState('');
  const [entityId, setEntityId] = useState('');
  const trail = useAuditTrail({ entity: entity || undefined, entityId: entityId.trim() || undefined });
  const verify = useVerifyAudit();
  const entries = trail.data?.pages.flat() ?? [];
  const result = verify.data;
  return (
    <>
      <PageHeader
        title="Audit"
        description="Every sign-in, change, capture and signature, with old and new values. The trail is append-only; each row is chained to the one before by its hash."
        actions={
          <Button onClick={() => verify.mutate()} loading={verify.isPending} data-testid="verify-chain">
            Verify the chain
          </Button>
        }
      />
      {result && (
        <div
          role="status"
          data-testid="verify-result"
          className={`mb-4 rounded-md border px-3 py-2 text-sm ${result.ok ? 'border-ok/40 bg-ok-soft text-ok' : 'border-danger/40 bg-danger-soft text-danger'}`}
        >
          {result.ok ? (
            <>
              <Badge tone="ok">Intact</Badge> All <span className="num">{result.checked}</span> rows match their hashes and links.
            </>
          ) : (
            <>
              <Badge tone="danger">Broken</Badge> Row <span className="num">{result.brokenAt?.id}</span>: {result.brokenAt?.reason}. The{' '}
              <span className="num">{result.checked}</span> rows before it check out.
            </>
          )}
        </div>
      )}
      {verify.isError && <ErrorNotice title="Could not verify" error={verify.error} />}
      <div className="mb-4 flex flex-wrap items-end gap-3">
        <SelectField label="Record type" value={entity} onChange={(e) => setEntity(e.target.value)} options={ENTITIES.map((x) => ({ value: x, label: x || 'All' }))} className="w-44" />
        <TextField label="Record id" placeholder="paste an id" value={entityId} onChange={(e) => setEntityId(e.target.value)} className="w-80" />
      </div>
      {trail.isPending ? (
        <ListSkeleton />
      ) : trail.isError ? (
        <ErrorNotice title="Could not load the audit trail" error={trail.error} onRetry={() => void trail.refetch()} />
      ) : (
        <div className="flex flex-col gap-3">
          <AuditTable entries={entries} brokenId={result?.brokenAt?.id} />
          {trail.hasNextPage && (
            <Button variant="secondary" onClick={() => void trail.fetchNextPage()} loading={trail.isFetchingNextPage} className="self-center">
              Load more
            </Button>
          )}
        </div>
      )}
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
