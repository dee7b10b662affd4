import { useId, type InputHTMLAttributes, type ReactNode, type Ref, type SelectHTMLAttributes } from 'react';
import { cn } from '../../lib/cn';

const controlClass = cn(
  'block w-full rounded-md border bg-surface px-3 text-ink placeholder:text-ink-faint',
  'focus-visible:outline-2 focus-visible:outline-offset-1 focus-visible:outline-focus',
  'disabled:bg-sunken disabled:text-ink-faint',
);

export interface FieldProps {
  /** Visible label; required so every control has an accessible name. */
  label: ReactNode;
  /** Error message shown under the control and announced via aria-describedby. */
  error?: string | undefined;
  /** Help text shown under the label. */
  hint?: ReactNode;
  className?: string;
}

interface FieldFrameProps extends FieldProps {
  id: string;
  hintId: string;
  errorId: string;
  children: ReactNode;
}

function FieldFrame({ id, hintId, errorId, label, hint, error, className, children }: FieldFrameProps) {
  return (
    <div className={cn('flex flex-col gap-1.5', className)}>
      <label htmlFor={id} className="text-sm font-medium text-ink">
        {label}
      </label>
      {hint && (
        <p id={hintId} className="text-xs text-ink-muted">
          {hint}
        </p>
      )}
      {children}
      {error && (
        <p id={errorId} className="text-sm text-danger" role="alert">
          {error}
        </p>
      )}
    </div>
  );
}

/** The ids that tie a control to its label, hint and error: for the frame, and the control's own attributes. */
function useFieldIds(id: string | undefined, hint: unknown, error: unknown) {
  const auto = useId();
  const fid = id ?? auto;
  const hintId = `${fid}-hint`;
  const errorId = `${fid}-error`;
  const described = [hint ? hintId : null, error ? errorId : null].filter(Boolean);
  return {
    frame: { id: fid, hintId, errorId },
    control: { id: fid, 'aria-invalid': error ? true : undefined, 'aria-describedby': described.length ? described.join(' ') : undefined },
  };
}

export interface TextFieldProps extends FieldProps, Omit<InputHTMLAttributes<HTMLInputElement>, 'className'> {
  inputClassName?: string;
  ref?: Ref<HTMLInputElement>;
}

/** Label + input + error. Works with react-hook-form's `register` (ref and handlers pass through). */
export function TextField({ label, error, hint, className, inputClassName, id, ref, ...input }: TextFieldProps) {
  const ids = useFieldIds(id, hint, error);
  return (
    <FieldFrame {...ids.frame} label={label} hint={hint} error={error} className={className}>
      <input
        ref={ref}
        {...ids.control}
        className={cn(controlClass, 'h-10', error ? 'border-danger' : 'border-line-strong', inputClassName)}
        {...input}
      />
    </FieldFrame>
  );
}

export interface SelectFieldProps extends FieldProps, Omit<SelectHTMLAttributes<HTMLSelectElement>, 'className'> {
  options: ReadonlyArray<{ value: string; label: string }>;
  ref?: Ref<HTMLSelectElement>;
}

/** Label + native select + error. */
export function SelectField({ label, error, hint, className, id, options, ref, ...select }: SelectFieldProps) {
  const ids = useFieldIds(id, hint, error);
  return (
    <FieldFrame {...ids.frame} label={label} hint={hint} error={error} className={className}>
      <select
        ref={ref}
        {...ids.control}
        className={cn(controlClass, 'h-10', error ? 'border-danger' : 'border-line-strong')}
        {...select}
      >
        {options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
    </FieldFrame>
  );
}

/** An error of a whole form (not of one field), announced as it appears; nothing when there is none. */
export function FormError({ message, id, className }: { message: string | undefined; id?: string; className?: string }) {
  if (!message) return null;
  return (
    <div id={id} role="alert" className={cn('rounded-md border border-danger/40 bg-danger-soft px-3 py-2 text-sm text-danger', className)}>
      {message}
    </div>
  );
}
