import { useEffect } from 'react';
import { whenValid } from '../../../../shared/schemas/numbers';
import { STANDARD_KINDS, STANDARD_UNITS, StandardInputSchema, type Standard, type StandardInput } from '../../../../shared/schemas/standards';
import { RegisterForm, useRegisterForm, type RegisterFormSlotProps } from '../../../components/registers/register-form';
import { SelectField, TextField } from '../../../components/ui/field';
import { unitLabel } from '../../../lib/format';
import { standardsApi } from '../api/get-standards';

const FIELDS = ['kind', 'description', 'serial', 'rangeMin', 'rangeMax', 'unit', 'accuracy.pctReading', 'accuracy.pctFullScale', 'accuracy.floor', 'resolution', 'certificateNo', 'calibratingLab', 'calibratedOn', 'dueOn'] as const;

/** The register's rule plus the form's own: a new entry names the laboratory that calibrated it. */
const StandardFormSchema = StandardInputSchema.superRefine((v, ctx) => {
  if (!v.calibratingLab?.trim()) ctx.addIssue({ code: 'custom', message: 'Name the laboratory that calibrated it (as on its certificate)', path: ['calibratingLab'] });
}, whenValid('calibratingLab'));

function toInput(s: Standard | null): StandardInput {
  if (!s) return { kind: 'pressure', description: '', serial: '', rangeMin: 0, rangeMax: 100, unit: 'kPa', accuracy: { pctReading: 0, pctFullScale: 0, floor: 0, certificateU: null, certificateK: null }, resolution: 0.001, certificateNo: '', calibratingLab: '', calibratedOn: '', dueOn: '' };
  const { kind, description, serial, rangeMin, rangeMax, unit, accuracy, resolution, certificateNo, calibratingLab, calibratedOn, dueOn } = s;
  return { kind, description, serial, rangeMin, rangeMax, unit, accuracy, resolution, certificateNo, calibratingLab, calibratedOn, dueOn };
}

/** Create or edit a reference standard; server field errors appear next to their field. */
export function StandardForm(slot: RegisterFormSlotProps<Standard>) {
  const standard = slot.row;
  const { form, frame } = useRegisterForm(standardsApi, slot, { schema: StandardFormSchema, defaultValues: toInput(standard), fields: FIELDS });
  const {
    register,
    setValue,
    getValues,
    watch,
    formState: { errors },
  } = form;
  const kind = watch('kind') === 'current' ? 'current' : 'pressure';
  useEffect(() => {
    // A current meter reads in mA; a pressure reference in a pressure unit: follow the kind.
    const unit = getValues('unit');
    if (!STANDARD_UNITS[kind].includes(unit) && unit !== standard?.unit) setValue('unit', kind === 'current' ? 'mA' : 'kPa');
  }, [kind, getValues, setValue, standard?.unit]);
  const stored = standard?.unit;
  // Units come from the product's own list; a unit stored before that rule shows so it can be replaced.
  const unitOptions = [
    ...(stored && !STANDARD_UNITS[kind].includes(stored) ? [{ value: stored, label: `${stored} (not in the list: choose another)` }] : []),
    ...STANDARD_UNITS[kind].map((u) => ({ value: u, label: unitLabel(u) })),
  ];
  const num = { valueAsNumber: true } as const;
  return (
    <RegisterForm {...frame}>
      <SelectField label="Kind" options={STANDARD_KINDS.map((k) => ({ value: k, label: k === 'pressure' ? 'Pressure reference' : 'Current meter' }))} error={errors.kind?.message} {...register('kind')} />
      <TextField label="Serial number" error={errors.serial?.message} {...register('serial')} />
      <TextField label="Description" className="sm:col-span-2" error={errors.description?.message} {...register('description')} />
      <TextField label="Range minimum" type="number" step="any" error={errors.rangeMin?.message} {...register('rangeMin', num)} />
      <TextField label="Range maximum" type="number" step="any" error={errors.rangeMax?.message} {...register('rangeMax', num)} />
      <SelectField label="Unit" options={unitOptions} error={errors.unit?.message} {...register('unit')} />
      <TextField label="Resolution" type="number" step="any" error={errors.resolution?.message} {...register('resolution', num)} />
      <TextField label="Accuracy, % of reading" type="number" step="any" error={errors.accuracy?.pctReading?.message} {...register('accuracy.pctReading', num)} />
      <TextField label="Accuracy, % of full scale" type="number" step="any" error={errors.accuracy?.pctFullScale?.message} {...register('accuracy.pctFullScale', num)} />
      <TextField label="Accuracy floor (unit)" type="number" step="any" error={errors.accuracy?.floor?.message} {...register('accuracy.floor', num)} />
      <TextField label="Certificate number" error={errors.certificateNo?.message} {...register('certificateNo')} />
      <TextField label="Calibrated by (laboratory)" hint="The laboratory that issued the certificate; printed on every certificate that uses this standard." error={errors.calibratingLab?.message} {...register('calibratingLab')} />
      <TextField label="Calibrated on" type="date" error={errors.calibratedOn?.message} {...register('calibratedOn')} />
      <TextField label="Due on" type="date" error={errors.dueOn?.message} {...register('dueOn')} />
    </RegisterForm>
  );
}
