import type { ReactNode } from 'react';
import { Badge, type BadgeTone } from '../../../components/ui/badge';
import { cn } from '../../../lib/cn';
import type { JobStep, StepStatus } from '../lib/job-steps';

export const STEP_STATUS: Record<StepStatus, { label: string; tone: BadgeTone }> = {
  done: { label: 'Done', tone: 'ok' },
  current: { label: 'Next', tone: 'accent' },
  blocked: { label: 'Stopped', tone: 'danger' },
  todo: { label: 'Not yet', tone: 'neutral' },
  optional: { label: 'Optional', tone: 'info' },
};

/** The steps of a job as a compact rail; each links to its section. */
export function StepRail({ steps }: { steps: readonly JobStep[] }) {
  return (
    <nav aria-label="Job steps" className="mb-6 overflow-x-auto">
      <ol className="flex min-w-max items-stretch gap-1.5">
        {steps.map((s, i) => (
          <li key={s.id}>
            <a
              href={`#step-${s.id}`}
              data-testid={`rail-${s.id}`}
              data-status={s.status}
              className={cn(
                'flex h-full items-center gap-2 rounded-md border px-3 py-2 text-sm hover:bg-sunken focus-visible:outline-2 focus-visible:outline-focus',
                s.status === 'current' ? 'border-accent bg-accent-soft/60 text-ink' : 'border-line bg-surface text-ink-muted',
                s.status === 'blocked' && 'border-danger/60',
              )}
            >
              <StepMark index={i + 1} status={s.status} />
              <span className="font-medium whitespace-nowrap">{s.title}</span>
            </a>
          </li>
        ))}
      </ol>
    </nav>
  );
}

function StepMark({ index, status }: { index: number; status: StepStatus }) {
  if (status === 'done')
    return (
      <span aria-label="done" className="flex size-5 items-center justify-center rounded-full bg-ok text-[11px] text-surface">
        <svg viewBox="0 0 12 12" className="size-3" aria-hidden="true">
          <path d="M2.5 6.2l2.3 2.3 4.7-5" fill="none" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round" />
        </svg>
      </span>
    );
  return (
    <span
      className={cn(
        'num flex size-5 items-center justify-center rounded-full border text-[11px]',
        status === 'blocked' ? 'border-danger text-danger' : status === 'current' ? 'border-accent text-accent' : 'border-line-strong text-ink-faint',
      )}
    >
      {index}
    </span>
  );
}

/** Section of the job page for one step: title, status, blockers verbatim, content. */
export function StepSection({ step, index, description, children }: { step: JobStep; index: number; description?: ReactNode; children?: ReactNode }) {
  const st = STEP_STATUS[step.status];
  return (
    <section id={`step-${step.id}`} aria-labelledby={`step-${step.id}-title`} data-testid={`step-${step.id}`} className="scroll-mt-20 rounded-card border border-line bg-surface p-5 shadow-card">
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div>
          <h2 id={`step-${step.id}-title`} className="flex items-center gap-2 text-lg font-semibold text-ink">
            <span className="num text-ink-faint">{index}.</span> {step.title}
          </h2>
          {description && <p className="mt-1 max-w-prose text-sm text-ink-muted">{description}</p>}
        </div>
        <Badge tone={st.tone} dot>
          {st.label}
        </Badge>
      </div>
      {step.blockers.length > 0 && step.status !== 'done' && <BlockerList items={step.blockers} />}
      {children && <div className="mt-4">{children}</div>}
    </section>
  );
}

/** What stops a step, as the server (or the check) said it. */
export function BlockerList({ items, title = 'What stops this step' }: { items: readonly string[]; title?: string }) {
  return (
    <div className="mt-3 rounded-md border border-warn/40 bg-warn-soft/60 px-3 py-2 text-sm" data-testid="blockers">
      <p className="font-medium text-warn">{title}</p>
      <ul className="mt-1 list-disc space-y-0.5 pl-5 text-ink">
        {items.map((b) => (
          <li key={b}>{b}</li>
        ))}
      </ul>
    </div>
  );
}
