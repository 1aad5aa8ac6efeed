import { type InputHTMLAttributes, type SelectHTMLAttributes, forwardRef, useId } from 'react';

const CONTROL =
  'w-full border border-rule bg-paper-raised px-3 py-2 text-sm text-ink placeholder:text-ink-faint focus:border-accent aria-[invalid=true]:border-danger';

interface FieldProps {
  label: string;
  hint?: string;
  error?: string;
}

/** A labelled input whose hint and error are announced with it. */
export const TextField = forwardRef<HTMLInputElement, FieldProps & InputHTMLAttributes<HTMLInputElement>>(
  function TextField({ label, hint, error, id, className = '', ...props }, ref) {
    const fallbackId = useId();
    const inputId = id ?? fallbackId;
    const describedBy = [hint ? `${inputId}-hint` : null, error ? `${inputId}-error` : null].filter(Boolean).join(' ');
    return (
      <div className={`flex flex-col gap-1 ${className}`}>
        <label htmlFor={inputId} className="text-sm font-medium">
          {label}
        </label>
        <input
          ref={ref}
          id={inputId}
          aria-invalid={error ? true : undefined}
          aria-describedby={describedBy || undefined}
          className={CONTROL}
          {...props}
        />
        {hint && (
          <p id={`${inputId}-hint`} className="text-xs text-ink-muted">
            {hint}
          </p>
        )}
        {error && (
          <p id={`${inputId}-error`} className="text-xs text-danger">
            {error}
          </p>
        )}
      </div>
    );
  },
);

export const SelectField = forwardRef<
  HTMLSelectElement,
  FieldProps & SelectHTMLAttributes<HTMLSelectElement> & { options: readonly { value: string; label: string }[] }
>(function SelectField({ label, hint, error, id, options, className = '', ...props }, ref) {
  const fallbackId = useId();
  const selectId = id ?? fallbackId;
  return (
    <div className={`flex flex-col gap-1 ${className}`}>
      <label htmlFor={selectId} className="text-sm font-medium">
        {label}
      </label>
      <select
        ref={ref}
        id={selectId}
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${selectId}-error` : hint ? `${selectId}-hint` : undefined}
        className={CONTROL}
        {...props}
      >
        {options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
      {hint && !error && (
        <p id={`${selectId}-hint`} className="text-xs text-ink-muted">
          {hint}
        </p>
      )}
      {error && (
        <p id={`${selectId}-error`} className="text-xs text-danger">
          {error}
        </p>
      )}
    </div>
  );
});

export function FormMessage({ kind, children }: { kind: 'error' | 'success'; children: React.ReactNode }) {
  return (
    <p
      role={kind === 'error' ? 'alert' : 'status'}
      className={`border px-3 py-2 text-sm ${kind === 'error' ? 'border-danger/50 bg-danger-wash text-danger' : 'border-accent/40 bg-accent-wash text-ink'}`}
    >
      {children}
    </p>
  );
}
