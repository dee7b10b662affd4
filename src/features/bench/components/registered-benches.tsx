import { useState } from 'react';
import type { BenchRecord, RegisteredBench } from '../../../../shared/schemas/benches';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { Dialog } from '../../../components/ui/dialog';
import { TextField, FormError } from '../../../components/ui/field';
import { toast } from '../../../components/ui/toast';
import { isApiError } from '../../../lib/api-client';
import { isoDay } from '../../../lib/format';
import { useBenches, useRegisterBench, useRevokeBench } from '../api/benches';

/**
 * Benches other than this server's own: the registered bench agents, each with its own token.
 * Leads and admins register a bench (its token is shown once, here) and revoke one (its token stops
 * working at once and its agent is disconnected).
 */
export function RegisteredBenches({ canManage }: { canManage: boolean }) {
  const benches = useBenches();
  const [registering, setRegistering] = useState(false);
  const [issued, setIssued] = useState<RegisteredBench | null>(null);
  const [revoking, setRevoking] = useState<BenchRecord | null>(null);
  const revoke = useRevokeBench();

  const items = benches.data?.items ?? [];
  return (
    <section aria-labelledby="benches-title" className="rounded-card border border-line bg-surface p-5 shadow-card" data-testid="registered-benches">
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div>
          <h2 id="benches-title" className="text-lg font-semibold text-ink">
            Bench agents
          </h2>
          <p className="mt-1 max-w-prose text-sm text-ink-muted">
            Bench PCs that feed this server with <span className="num">npm run agent</span>. Each has its own token and feeds only its own bench; lines from any other name are
            refused. {benches.data ? `At most ${benches.data.limit} benches.` : ''}
          </p>
        </div>
        {canManage && (
          <Button size="sm" onClick={() => setRegistering(true)} data-testid="register-bench">
            Register a bench…
          </Button>
        )}
      </div>
      {benches.isError ? (
        <p className="mt-3 text-sm text-danger">Could not load the benches: {benches.error.message}</p>
      ) : items.length === 0 ? (
        <p className="mt-3 text-sm text-ink-muted">{benches.isPending ? 'Loading…' : 'No bench agents are registered.'}</p>
      ) : (
        <table className="mt-4 w-full text-sm">
          <thead>
            <tr className="text-left text-xs text-ink-muted">
              <th className="py-1 font-medium">Bench</th>
              <th className="py-1 font-medium">Where</th>
              <th className="py-1 font-medium">Token</th>
              <th className="py-1 font-medium">Registered</th>
              <th className="py-1 font-medium">State</th>
              {canManage && <th className="py-1" />}
            </tr>
          </thead>
          <tbody>
            {items.map((b) => (
              <tr key={b.id} className="border-t border-line" data-testid={`registered-bench-${b.id}`}>
                <td className="num py-2 text-ink">{b.id}</td>
                <td className="py-2 text-ink">{b.label}</td>
                <td className="num py-2 text-ink-muted">{b.tokenHint}…</td>
                <td className="num py-2 text-ink-muted">{isoDay(b.createdAt)}</td>
                <td className="py-2">{b.active ? <Badge tone="ok">Active</Badge> : <Badge>Revoked {isoDay(b.revokedAt)}</Badge>}</td>
                {canManage && (
                  <td className="py-2 text-right">
                    {b.active && (
                      <Button size="sm" variant="ghost" onClick={() => setRevoking(b)} data-testid={`revoke-bench-${b.id}`}>
                        Revoke
                      </Button>
                    )}
                  </td>
                )}
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {registering && (
        <RegisterBenchDialog
          onClose={() => setRegistering(false)}
          onRegistered={(r) => {
            setRegistering(false);
            setIssued(r);
          }}
        />
      )}
      <Dialog
        open={!!issued}
        onClose={() => setIssued(null)}
        title={`Token for ${issued?.bench.id ?? ''}`}
        description="Copy it to the bench PC now: it is shown this once. Run the agent there with it."
        footer={<Button onClick={() => setIssued(null)}>I have copied it</Button>}
      >
        <p className="num break-all rounded-md border border-line bg-sunken p-3 text-sm text-ink" data-testid="issued-token">
          {issued?.token}
        </p>
        <p className="num mt-3 text-xs text-ink-muted">
          npm run agent -- --server {typeof window === 'undefined' ? '' : window.location.origin} --bench-id {issued?.bench.id} --token …
        </p>
      </Dialog>
      <Dialog
        open={!!revoking}
        onClose={() => setRevoking(null)}
        title={`Revoke ${revoking?.id ?? ''}?`}
        description="Its token stops working at once and its agent is disconnected. The name stays retired; its stored lines stay attributed to it."
        footer={
          <>
            <Button variant="secondary" onClick={() => setRevoking(null)}>
              Cancel
            </Button>
            <Button
              variant="danger"
              loading={revoke.isPending}
              data-testid="confirm-revoke"
              onClick={() => {
                const id = revoking!.id;
                revoke.mutate(id, {
                  onSuccess: () => {
                    toast(`${id} revoked`, { tone: 'success' });
                    setRevoking(null);
                  },
                  onError: (e) => toast(`Could not revoke ${id}`, { tone: 'error', description: e.message }),
                });
              }}
            >
              Revoke
            </Button>
          </>
        }
      />
    </section>
  );
}

function RegisterBenchDialog({ onClose, onRegistered }: { onClose: () => void; onRegistered: (r: RegisteredBench) => void }) {
  const [id, setId] = useState('');
  const [label, setLabel] = useState('');
  const [errors, setErrors] = useState<{ id?: string; label?: string; root?: string }>({});
  const register = useRegisterBench();
  const submit = () => {
    register.mutate(
      { id: id.trim(), label: label.trim() },
      {
        onSuccess: onRegistered,
        onError: (e) => {
          if (isApiError(e)) setErrors({ id: e.fieldMessage('id'), label: e.fieldMessage('label'), root: e.fieldMessage('id') || e.fieldMessage('label') ? undefined : e.message });
          else setErrors({ root: 'Something went wrong. Try again.' });
        },
      },
    );
  };
  return (
    <Dialog
      open
      onClose={onClose}
      title="Register a bench"
      description="A bench agent gets its own token; it feeds only this bench's name."
      footer={
        <>
          <Button variant="secondary" onClick={onClose}>
            Cancel
          </Button>
          <Button loading={register.isPending} onClick={submit} data-testid="submit-bench">
            Register
          </Button>
        </>
      }
    >
      <form
        className="flex flex-col gap-4"
        noValidate
        onSubmit={(e) => {
          e.preventDefault();
          submit();
        }}
      >
        <FormError message={errors.root} />
        <TextField label="Bench name" hint="Lower-case letters, digits and hyphens, e.g. workshop-2" value={id} onChange={(e) => setId(e.target.value)} error={errors.id} />
        <TextField label="Where it is" value={label} onChange={(e) => setLabel(e.target.value)} error={errors.label} />
      </form>
    </Dialog>
  );
}
