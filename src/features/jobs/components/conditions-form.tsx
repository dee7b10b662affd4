import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { AMBIENT_BOUNDS, ConditionsPatchSchema, type ChecklistPatch, type ConditionsPatch, type JobDetail } from '../../../../shared/schemas/jobs';
import { Button } from '../../../components/ui/button';
import { TextField } from '../../../components/ui/field';
import { toast } from '../../../components/ui/toast';
import { applyServerErrors } from '../../../lib/form-errors';
import { formatStamp } from './signed-step';

const FIELDS = ['temperatureC', 'humidityPctRh', 'onReceipt'] as const;

/** Ambient temperature and humidity at the bench and the condition on receipt, for the certificate. */
export function ConditionsForm({ job, locked, save }: { job: JobDetail; locked: boolean; save: (patch: ChecklistPatch) => Promise<unknown> }) {
  const c = job.checklist.conditions;
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors, isSubmitting, isDirty },
  } = useForm<ConditionsPatch>({
    resolver: zodResolver(ConditionsPatchSchema),
    criteriaMode: 'all',
    defaultValues: { temperatureC: c?.temperatureC ?? undefined, humidityPctRh: c?.humidityPctRh ?? undefined, onReceipt: c?.onReceipt ?? '' },
  });
  const onSubmit = handleSubmit(async (values) => {
    try {
      await save({ conditions: values });
      toast('Conditions recorded', { tone: 'success' });
    } catch (e) {
      applyServerErrors(e, setError, FIELDS, 'conditions.');
    }
  });
  const num = { valueAsNumber: true } as const;
  const t = AMBIENT_BOUNDS.temperatureC;
  return (
    <form onSubmit={onSubmit} noValidate aria-label="Conditions" className="rounded-md border border-line p-4">
      <h3 className="text-sm font-semibold tracking-wide text-ink-muted">Conditions for the certificate</h3>
      {errors.root?.message && (
        <p role="alert" className="mt-2 text-sm text-danger">
          {errors.root.message}
        </p>
      )}
      <div className="mt-3 grid grid-cols-1 gap-4 sm:grid-cols-2">
        <TextField label="Ambient temperature (°C)" hint={`${t.min} to ${t.max} °C`} type="number" step="0.1" inputClassName="num" disabled={locked} error={errors.temperatureC?.message} {...register('temperatureC', num)} />
        <TextField label="Relative humidity (%rh)" hint="0 to 100 %rh" type="number" step="1" inputClassName="num" disabled={locked} error={errors.humidityPctRh?.message} {...register('humidityPctRh', num)} />
        <TextField
          label="Condition on receipt"
          hint="As found before any work, e.g. clean, no visible damage, fittings tight."
          className="sm:col-span-2"
          maxLength={500}
          disabled={locked}
          error={errors.onReceipt?.message}
          {...register('onReceipt')}
        />
      </div>
      <div className="mt-3 flex flex-wrap items-center gap-3">
        {!locked && (
          <Button type="submit" size="sm" loading={isSubmitting} disabled={!!c && !isDirty}>
            Record conditions
          </Button>
        )}
        {c?.recorded && <span className="text-sm text-ink-muted">Recorded by {formatStamp(c.recorded)}.</span>}
      </div>
    </form>
  );
}
