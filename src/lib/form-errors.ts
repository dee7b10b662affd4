import type { FieldValues, Path, UseFormSetError } from 'react-hook-form';
import { isApiError } from './api-client';

/**
 * Puts a failed save's errors on the form: every server field error next to its field at once
 * (`prefix` maps a form onto part of the body, e.g. `conditions.`), anything else above the form.
 * Focus goes to the first field in error.
 */
export function applyServerErrors<T extends FieldValues>(e: unknown, setError: UseFormSetError<T>, fields: readonly Path<T>[], prefix = ''): void {
  if (!isApiError(e)) {
    setError('root' as Path<T>, { message: 'Could not save. Check the connection and try again.' });
    return;
  }
  let placed = false;
  for (const f of fields) {
    const messages = e.fields?.[`${prefix}${f}`];
    if (!messages?.length) continue;
    setError(f, { message: messages.join(' ') }, { shouldFocus: !placed });
    placed = true;
  }
  const others = Object.entries(e.fields ?? {}).filter(([k]) => !fields.some((f) => `${prefix}${f}` === k));
  if (!placed || others.length) setError('root' as Path<T>, { message: others.length ? `${e.message}: ${others.map(([, m]) => m.join(' ')).join(' ')}` : e.message });
}
