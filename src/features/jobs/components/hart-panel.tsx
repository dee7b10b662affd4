import { useState, type ReactNode } from 'react';
import type { HartReading, JobHart } from '../../../../shared/schemas/hart-job';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { ReasonDialog } from '../../../components/ui/reason-dialog';
import { formatDateTime, formatNumber } from '../../../lib/format';
import { unitLabel } from '../../../../shared/format';
import { useJobHart, useJobHartAction } from '../api/job-hart';

const hex = (n: number, digits: number) => `0x${n.toString(16).toUpperCase().padStart(digits, '0')}`;

/** The device's identity and configuration as read (commands 0, 13, 15). */
export function HartReadingList({ reading, testId }: { reading: HartReading; testId: string }) {
  const { identity: i, config: c } = reading;
  const rows: [string, ReactNode][] = [
    ['Tag', i.tag || '(blank)'],
    ['Descriptor', i.descriptor || '(blank)'],
    ['Manufacturer / device type', `${i.manufacturerId === null ? '—' : hex(i.manufacturerId, 4)} / ${hex(i.expandedDeviceType, 4)}`],
    ['Device id', hex(i.deviceId, 6)],
    [
      'Range',
      // The numbers and the unit each kept on one line: a narrow screen breaks between them only.
      <>
        <span className="whitespace-nowrap">
          {formatNumber(c.lrv)} to {formatNumber(c.urv)}
        </span>{' '}
        <span className="whitespace-nowrap">{c.unit ? unitLabel(c.unit) : `(unit code ${c.unitCode})`}</span>
      </>,
    ],
    ['Transfer function', c.transferFunction],
    ['Damping', `${formatNumber(c.dampingS, 3)} s`],
    ['Write protect', c.writeProtect ? 'on' : 'off'],
  ];
  return (
    <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm" data-testid={testId}>
      {rows.map(([k, v]) => (
        <div key={k} className="contents">
          <dt className="text-ink-muted">{k}</dt>
          <dd className="num break-words whitespace-normal!">{v}</dd>
        </div>
      ))}
    </dl>
  );
}

/** What each resolution asks and does: the dialog's words. */
const RESOLUTION_DIALOG = {
  'correct-register': {
    title: 'Correct the register to the device',
    description: 'The register takes the device’s range, unit and transfer function. Say why the register was wrong; the change is audited.',
    submitLabel: 'Correct the register',
  },
  'as-found': {
    title: 'Record the device as found',
    description: 'The device is kept as it is and the disagreement is recorded with your reason, in the audit trail and the record.',
    submitLabel: 'Record as found',
  },
} as const;

/** Resolution of a disagreement in words. */
function Resolution({ r }: { r: NonNullable<JobHart['resolution']> }) {
  return (
    <p className="text-sm text-ink-muted" data-testid="hart-resolution">
      {r.kind === 'register-corrected' ? 'Register corrected to the device' : 'Device recorded as found'} by {r.byName}, {formatDateTime(r.at)}: “{r.reason}”
    </p>
  );
}

/**
 * The preparation's HART check: the transmitter's identity and configuration read over HART and
 * compared with the register; a disagreement blocks the run until the register is corrected or the
 * device is recorded as found, each with a reason. Hidden when the bench has no HART modem in use.
 */
export function HartPanel({ jobId, canEdit }: { jobId: string; canEdit: boolean }) {
  const hart = useJobHart(jobId);
  const act = useJobHartAction(jobId);
  const [dialog, setDialog] = useState<'correct-register' | 'as-found' | null>(null);
  const h = hart.data;
  if (!h?.available) return null;
  const open = h.blockers.length > 0;
  return (
    <section aria-label="HART device" className="flex flex-col gap-3 rounded-md border border-line p-3" data-testid="hart-panel">
      <div className="flex flex-wrap items-center gap-2">
        <h3 className="text-sm font-semibold text-ink">HART device</h3>
        {h.asFound && <Badge tone={open ? 'danger' : 'ok'}>{open ? 'Disagrees with the register' : 'Agrees with the register'}</Badge>}
      </div>
      {h.asFound ? <HartReadingList reading={h.asFound} testId="hart-as-found" /> : <p className="text-sm text-ink-muted">Not read yet: the run start reads it, or read it now.</p>}
      {h.mismatches.length > 0 && (
        <ul className="list-disc pl-5 text-sm text-danger" data-testid="hart-mismatches">
          {h.mismatches.map((m) => (
            <li key={m.field}>{m.message}</li>
          ))}
        </ul>
      )}
      {h.resolution && <Resolution r={h.resolution} />}
      {act.error && (
        <p role="alert" className="text-sm text-danger">
          {act.error.message}
        </p>
      )}
      {canEdit && (
        <div className="flex flex-wrap gap-2">
          <Button variant="secondary" size="sm" loading={act.isPending} onClick={() => act.mutate({ kind: 'check' })} data-testid="hart-read">
            {h.asFound ? 'Read the device again' : 'Read the device'}
          </Button>
          {open && h.mismatches.length > 0 && (
            <>
              <Button size="sm" onClick={() => setDialog('correct-register')} data-testid="hart-correct-register">
                Correct the register…
              </Button>
              <Button variant="secondary" size="sm" onClick={() => setDialog('as-found')} data-testid="hart-record-as-found">
                Record the device as found…
              </Button>
            </>
          )}
        </div>
      )}
      <ReasonDialog
        open={dialog !== null}
        {...RESOLUTION_DIALOG[dialog ?? 'as-found']}
        onClose={() => setDialog(null)}
        onSubmit={async (reason) => {
          await act.mutateAsync({ kind: dialog!, reason });
          setDialog(null);
        }}
        pending={act.isPending}
        submitTestId="hart-reason-submit"
      />
    </section>
  );
}
