import { useRef, useState } from 'react';
import { PRESSURE_UNIT_IDS } from '../../../../shared/calc/units';
import { CUTOFF_MODES, INSTRUMENT_KINDS, InstrumentInputSchema, isReversedRange, OUTPUT_MODES, type Instrument, type InstrumentInput } from '../../../../shared/schemas/instruments';
import { RegisterForm, useRegisterForm, type RegisterFormSlotProps } from '../../../components/registers/register-form';
import { Button } from '../../../components/ui/button';
import { SelectField, TextField } from '../../../components/ui/field';
import { unitLabel } from '../../../lib/format';
import { instrumentsApi } from '../api/get-instruments';
import { OUTPUT_MODE_LABELS } from './instrument-columns';

const FIELDS = ['tag', 'kind', 'service', 'location', 'lrv', 'urv', 'unit', 'outputMode', 'cutoffMode', 'cutoffValue', 'tolerancePct', 'intervalDays', 'hazardousMedium', 'notes'] as const;
const CUTOFF_LABELS = { none: 'None', clamp: 'Clamp to zero below the cutoff', linear: 'Linear below the breakpoint' } as const;
const KIND_LABELS = { 'dp-flow': 'DP flow', pressure: 'Pressure', 'dp-level': 'DP level' } as const;

function toInput(i: Instrument | null): InstrumentInput {
  if (!i) return { tag: '', kind: 'dp-flow', service: '', location: '', lrv: 0, urv: 100, unit: 'kPa', outputMode: 'sqrt-transmitter', cutoffMode: 'none', cutoffValue: 0, tolerancePct: 0.5, intervalDays: 365, primaryElement: null, hazardousMedium: false, notes: '' };
  return {
    tag: i.tag,
    kind: i.kind,
    service: i.service,
    location: i.location,
    lrv: i.lrv,
    urv: i.urv,
    unit: i.unit as InstrumentInput['unit'],
    outputMode: i.outputMode,
    cutoffMode: i.cutoffMode,
    cutoffValue: i.cutoffValue,
    tolerancePct: i.tolerancePct,
    intervalDays: i.intervalDays,
    primaryElement: i.primaryElement,
    hazardousMedium: i.hazardousMedium,
    notes: i.notes,
  };
}

/** Create or edit an instrument with the shared schema; the server's field errors appear in place. */
export function InstrumentForm(slot: RegisterFormSlotProps<Instrument>) {
  // A reversed range is legitimate for some level and pressure service: asked about once, not refused.
  const [askReversed, setAskReversed] = useState(false);
  const reversedConfirmed = useRef(false);
  const { form, onSubmit, frame } = useRegisterForm(instrumentsApi, slot, {
    schema: InstrumentInputSchema,
    defaultValues: toInput(slot.row),
    fields: FIELDS,
    guard: (values) => {
      const ask = isReversedRange(values) && !reversedConfirmed.current;
      setAskReversed(ask);
      return !ask;
    },
  });
  const {
    register,
    formState: { errors },
  } = form;
  const num = { valueAsNumber: true } as const;
  return (
    <RegisterForm {...frame}>
      <TextField label="Tag" error={errors.tag?.message} {...register('tag')} />
      <SelectField label="Kind" options={INSTRUMENT_KINDS.map((k) => ({ value: k, label: KIND_LABELS[k] }))} error={errors.kind?.message} {...register('kind')} />
      <TextField label="Service" error={errors.service?.message} {...register('service')} />
      <TextField label="Location" error={errors.location?.message} {...register('location')} />
      <TextField label="LRV" type="number" step="any" error={errors.lrv?.message} {...register('lrv', num)} />
      <TextField label="URV" type="number" step="any" error={errors.urv?.message} {...register('urv', num)} />
      <SelectField label="Unit" options={PRESSURE_UNIT_IDS.map((u) => ({ value: u, label: unitLabel(u) }))} error={errors.unit?.message} {...register('unit')} />
      <SelectField label="Output" options={OUTPUT_MODES.map((m) => ({ value: m, label: OUTPUT_MODE_LABELS[m] }))} error={errors.outputMode?.message} {...register('outputMode')} />
      <SelectField label="Low-flow cutoff" options={CUTOFF_MODES.map((m) => ({ value: m, label: CUTOFF_LABELS[m] }))} error={errors.cutoffMode?.message} {...register('cutoffMode')} />
      <TextField label="Cutoff value (%)" type="number" step="any" error={errors.cutoffValue?.message} {...register('cutoffValue', num)} />
      <TextField label="Tolerance (± % of span)" type="number" step="any" error={errors.tolerancePct?.message} {...register('tolerancePct', num)} />
      <TextField label="Interval (days)" type="number" step="1" error={errors.intervalDays?.message} {...register('intervalDays', num)} />
      <label className="flex items-start gap-2 text-sm sm:col-span-2">
        <input type="checkbox" className="mt-0.5 size-4 accent-[var(--sp-accent)]" {...register('hazardousMedium')} />
        <span>
          <span className="font-medium text-ink">Hazardous medium</span>
          <span className="block text-ink-muted">Toxic, flammable or hot (e.g. fuel gas, steam): the flush before opening becomes a required step on every job.</span>
        </span>
      </label>
      <TextField label="Notes" className="sm:col-span-2" error={errors.notes?.message} {...register('notes')} />
      {askReversed && (
        <div role="alert" data-testid="reversed-range" className="rounded-md border border-warn/50 bg-warn-soft px-3 py-3 text-sm text-ink sm:col-span-2">
          <p className="font-medium">The LRV is above the URV: the output falls as the pressure rises.</p>
          <p className="mt-1 text-ink-muted">That is right for some level and pressure service (a wet leg, a reverse-acting loop). On a flow transmitter it is usually a typing error.</p>
          <div className="mt-2 flex flex-wrap gap-2">
            <Button
              size="sm"
              onClick={() => {
                reversedConfirmed.current = true;
                void onSubmit();
              }}
            >
              Save with the reversed range
            </Button>
            <Button size="sm" variant="secondary" onClick={() => setAskReversed(false)}>
              Let me correct it
            </Button>
          </div>
        </div>
      )}
    </RegisterForm>
  );
}
