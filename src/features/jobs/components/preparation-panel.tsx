import { useState } from 'react';
import type { ChecklistPatch, JobDetail } from '../../../../shared/schemas/jobs';
import type { Standard } from '../../../../shared/schemas/standards';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { TextField } from '../../../components/ui/field';
import { SafetyNote } from '../../../components/ui/safety-note';
import { toast } from '../../../components/ui/toast';
import { isApiError } from '../../../lib/api-client';
import { cn } from '../../../lib/cn';
import { ConditionsForm } from './conditions-form';
import { formatStamp, SignedStep } from './signed-step';

const DUE = { 'in-date': { label: 'In date', tone: 'ok' }, 'due-soon': { label: 'Due soon', tone: 'warn' }, expired: { label: 'Expired', tone: 'danger' } } as const;

export interface PreparationPanelProps {
  job: JobDetail;
  /** The standards register, to choose from. */
  register: readonly Standard[] | undefined;
  /** Only the assigned technician changes the checklist. */
  canEdit: boolean;
  save: (patch: ChecklistPatch) => Promise<unknown>;
  saving: boolean;
}

function errorText(e: unknown): string {
  if (isApiError(e)) return e.fields ? Object.values(e.fields).flat().join(' ') || e.message : e.message;
  return e instanceof Error ? e.message : 'Could not save';
}

/** Standards, permit, interlock bypass and the acknowledgements before a run, with the safety cautions. */
export function PreparationPanel({ job, register, canEdit, save, saving }: PreparationPanelProps) {
  const c = job.checklist;
  const locked = !canEdit || job.status === 'submitted' || job.status === 'approved';
  const [pendingKey, setPendingKey] = useState<string | null>(null);

  const run = async (key: string, patch: ChecklistPatch, done?: string) => {
    setPendingKey(key);
    try {
      await save(patch);
      if (done) toast(done, { tone: 'success' });
    } catch (e) {
      toast('Not saved', { tone: 'error', description: errorText(e) });
    } finally {
      setPendingKey(null);
    }
  };

  return (
    <div className="flex flex-col gap-6">
      <SafetyNote />
      {!canEdit && <p className="text-sm text-ink-muted">Only the assigned technician prepares this job; you see it read-only.</p>}

      <StandardsChooser job={job} register={register} locked={locked} pending={pendingKey === 'standards'} onSave={(ids) => run('standards', { standardIds: ids }, 'Standards saved')} />

      <PermitField job={job} locked={locked} pending={pendingKey === 'permit'} onSave={(permitNo) => run('permit', { permitNo }, 'Permit recorded')} />

      <BypassBlock job={job} locked={locked} pendingKey={pendingKey} run={run} />

      <div>
        <h3 className="text-sm font-semibold tracking-wide text-ink-muted">Before connecting</h3>
        <div className="mt-1 divide-y divide-line">
          <SignedStep
            testId="ack-operators"
            label="Operators informed"
            detail="The control room knows this loop will read false while you work on it."
            value={c.operatorsInformed}
            pending={pendingKey === 'operatorsInformed'}
            disabled={locked || saving}
            onConfirm={() => void run('operatorsInformed', { operatorsInformed: true })}
          />
          <SignedStep
            testId="ack-isolated"
            label="Transmitter isolated from the process"
            detail="Manifold block valves closed as the permit describes."
            value={c.isolated}
            pending={pendingKey === 'isolated'}
            disabled={locked || saving}
            onConfirm={() => void run('isolated', { isolated: true })}
          />
          <SignedStep
            testId="ack-vented"
            label="Transmitter vented and drained"
            detail="Pressure released to a safe place; both sides at atmosphere before the calibrator goes on."
            value={c.vented}
            pending={pendingKey === 'vented'}
            disabled={locked || saving}
            onConfirm={() => void run('vented', { vented: true })}
          />
          <SignedStep
            testId="ack-flushed"
            label={job.hazardousMedium ? 'Hazardous medium flushed (required: this tag is marked hazardous)' : 'Hazardous media flushed (where the site procedure asks for it)'}
            detail="Impulse lines and body flushed of toxic, flammable or hot media before opening."
            value={c.flushed}
            pending={pendingKey === 'flushed'}
            disabled={locked || saving}
            onConfirm={() => void run('flushed', { flushed: true })}
          />
        </div>
      </div>

      <ConditionsForm job={job} locked={locked} save={save} />
    </div>
  );
}

function StandardsChooser({
  job,
  register,
  locked,
  pending,
  onSave,
}: {
  job: JobDetail;
  register: readonly Standard[] | undefined;
  locked: boolean;
  pending: boolean;
  onSave: (ids: string[]) => void;
}) {
  const [selected, setSelected] = useState<string[] | null>(null);
  const chosen = selected ?? job.checklist.standardIds;
  const dirty = selected !== null && [...selected].sort().join() !== [...job.checklist.standardIds].sort().join();
  const checked = new Map(job.standards.map((s) => [s.id, s]));
  const fits = new Map((job.standardFits ?? []).map((f) => [f.id, f]));
  const toggle = (id: string) => setSelected((prev) => {
    const base = prev ?? job.checklist.standardIds;
    return base.includes(id) ? base.filter((x) => x !== id) : [...base, id];
  });

  return (
    <fieldset>
      <legend className="text-sm font-semibold tracking-wide text-ink-muted">Reference standards</legend>
      <p className="mt-1 text-sm text-ink-muted">One pressure reference and one current meter. An expired standard, or one whose range does not cover the instrument, blocks the run.</p>
      {!register ? (
        <p className="mt-3 text-sm text-ink-muted">Loading the standards register…</p>
      ) : (
        <ul className="mt-3 grid gap-2 md:grid-cols-2" aria-label="Standards to choose from">
          {register.map((s) => {
            const on = chosen.includes(s.id);
            const check = checked.get(s.id);
            const fit = fits.get(s.id);
            const due = DUE[s.dueState];
            return (
              <li key={s.id}>
                <label
                  className={cn(
                    'flex cursor-pointer items-start gap-3 rounded-md border p-3 text-sm',
                    on ? 'border-accent bg-accent-soft/40' : 'border-line hover:bg-sunken/60',
                    locked && 'cursor-default',
                  )}
                >
                  <input type="checkbox" className="mt-1 size-4 accent-[var(--sp-accent)]" checked={on} disabled={locked} onChange={() => toggle(s.id)} />
                  <span className="min-w-0 flex-1">
                    <span className="flex flex-wrap items-center gap-2">
                      <span className="font-medium text-ink">{s.description}</span>
                      <Badge tone={due.tone} dot>
                        {due.label}
                      </Badge>
                    </span>
                    <span className="mt-0.5 block text-ink-muted">
                      {s.kind === 'pressure' ? 'Pressure reference' : 'Current meter'} · <span className="num">{s.serial}</span> · cert{' '}
                      <span className="num">{s.certificateNo}</span> · due <span className="num">{s.dueOn}</span>
                    </span>
                    {fit && (
                      <span className="mt-0.5 block text-ink-muted" data-testid="standard-fit">
                        TUR <span className="num text-ink">{formatRatio(fit.tur)} : 1</span> at this tolerance · resolution{' '}
                        <span className="num text-ink">{formatRatio(fit.resolutionPctOfTolerance)} %</span> of the tolerance
                      </span>
                    )}
                    {fit?.warning && (
                      <span className="mt-0.5 block font-medium text-warn" data-testid="standard-fit-warning">
                        Caution: {fit.warning}
                      </span>
                    )}
                    {check?.problem && (
                      <span className="mt-1 block font-medium text-danger" data-testid="standard-problem">
                        Cannot be used: {check.problem}
                      </span>
                    )}
                  </span>
                </label>
              </li>
            );
          })}
        </ul>
      )}
      {!locked && (
        <div className="mt-3 flex items-center gap-3">
          <Button size="sm" onClick={() => onSave(chosen)} disabled={!dirty} loading={pending}>
            Save standards
          </Button>
          {dirty && <span className="text-sm text-ink-muted">Not saved yet</span>}
        </div>
      )}
    </fieldset>
  );
}

/** A ratio or percentage to three significant figures, without trailing zeros. */
function formatRatio(v: number): string {
  return String(Number(v.toPrecision(3)));
}

function PermitField({ job, locked, pending, onSave }: { job: JobDetail; locked: boolean; pending: boolean; onSave: (v: string) => void }) {
  const [value, setValue] = useState<string | null>(null);
  const current = value ?? job.checklist.permitNo ?? '';
  const dirty = value !== null && value.trim() !== (job.checklist.permitNo ?? '');
  const error = value !== null && value.trim() === '' ? 'Enter the permit number' : undefined;
  return (
    <form
      className="flex flex-wrap items-end gap-3"
      onSubmit={(e) => {
        e.preventDefault();
        if (!error && dirty) onSave(current.trim());
      }}
    >
      <TextField
        label="Permit-to-work number"
        hint="As written on the permit issued for this work."
        className="w-72"
        inputClassName="num"
        value={current}
        disabled={locked}
        error={error}
        maxLength={60}
        onChange={(e) => setValue(e.target.value)}
      />
      {!locked && (
        <Button type="submit" size="sm" className="mb-1" disabled={!dirty || !!error} loading={pending}>
          Record permit
        </Button>
      )}
    </form>
  );
}

function BypassBlock({
  job,
  locked,
  pendingKey,
  run,
}: {
  job: JobDetail;
  locked: boolean;
  pendingKey: string | null;
  run: (key: string, patch: ChecklistPatch, done?: string) => Promise<void>;
}) {
  const b = job.checklist.bypass;
  const [required, setRequired] = useState<boolean | null>(null);
  const [description, setDescription] = useState<string | null>(null);
  // No default: until the technician answers, neither choice is selected.
  const req = required ?? b.required;
  const desc = description ?? b.description;
  const dirty = req !== null && (req !== b.required || desc.trim() !== b.description);
  const descError = req && description !== null && desc.trim() === '' ? 'Say which interlock is bypassed' : undefined;
  const fixed = !!b.recorded;

  return (
    <fieldset className="rounded-md border border-line p-4">
      <legend className="px-1 text-sm font-semibold tracking-wide text-ink-muted">Interlock bypass</legend>
      <p className="mb-2 text-sm text-ink">Is an interlock bypass needed for this work?</p>
      <div className="flex flex-wrap gap-4 text-sm" role="radiogroup" aria-label="Is an interlock bypass needed?">
        <label className="flex items-center gap-2">
          <input type="radio" name="bypass" checked={req === false} disabled={locked || fixed} onChange={() => setRequired(false)} /> No bypass needed
        </label>
        <label className="flex items-center gap-2">
          <input type="radio" name="bypass" checked={req === true} disabled={locked || fixed} onChange={() => setRequired(true)} /> A bypass is needed
        </label>
      </div>
      {b.required === null && !locked && (
        <p className="mt-2 text-sm text-warn" data-testid="bypass-unanswered">
          Not answered yet: choose one and save. The run waits for the answer.
        </p>
      )}
      {req && (
        <TextField
          className="mt-3 max-w-xl"
          label="Which interlock or trip is bypassed"
          hint="As authorised on the permit, e.g. the trip and the bypass key or switch used."
          value={desc}
          maxLength={200}
          disabled={locked || fixed}
          error={descError}
          onChange={(e) => setDescription(e.target.value)}
        />
      )}
      {!locked && !fixed && (
        <div className="mt-3 flex flex-wrap gap-2">
          <Button
            size="sm"
            variant="secondary"
            disabled={!dirty || req === null || (req && desc.trim() === '')}
            loading={pendingKey === 'bypass'}
            onClick={() => void run('bypass', { bypass: { required: req === true, description: req ? desc.trim() : '' } }, 'Bypass need saved')}
          >
            Save
          </Button>
          {b.required && !dirty && (
            <Button size="sm" loading={pendingKey === 'bypassRecorded'} onClick={() => void run('bypassRecorded', { bypassRecorded: true }, 'Bypass recorded')}>
              Record bypass applied
            </Button>
          )}
        </div>
      )}
      {b.recorded && (
        <p className="mt-3 text-sm text-ink-muted">
          Applied: <span className="text-ink">{b.description}</span> — recorded by {formatStamp(b.recorded)}.{' '}
          {b.removed ? <>Removed by {formatStamp(b.removed)}.</> : <span className="font-medium text-warn">Remove it before the loop returns to service.</span>}
        </p>
      )}
    </fieldset>
  );
}
