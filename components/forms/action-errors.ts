import type { FieldValues, Path, UseFormSetError } from 'react-hook-form';
import type { ActionResult } from '@/lib/api/action-result';

/** Puts a server action's refusal on the form: per-field messages where it names fields, else at the top. */
export function showActionErrors<T extends FieldValues>(result: ActionResult<unknown> | undefined, setError: UseFormSetError<T>): void {
  if (!result || result.ok) return;
  for (const [field, message] of Object.entries(result.fieldErrors ?? {})) {
    if (field) setError(field as Path<T>, { message });
  }
  setError('root', { message: result.error });
}
