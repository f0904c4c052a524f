// Form controls that show a field's problem beside it (zod issue or server 400 details), linked
// with aria-describedby so screen readers read the problem with the field.
import type { InputHTMLAttributes, ReactNode, SelectHTMLAttributes } from 'react';
import { useId } from 'react';

export function FieldProblem({ id, message }: { id: string; message?: string }) {
  if (!message) return null;
  return (
    <p id={id} className="text-xs font-medium text-cut-deep" data-field-error>
      {message}
    </p>
  );
}

const controlClass = (invalid: boolean) =>
  `rounded-md border bg-white px-3 py-2 text-ink focus:border-cut ${invalid ? 'border-cut ring-1 ring-cut/40' : 'border-line'}`;

export function InputField({
  label,
  hint,
  error,
  ...props
}: InputHTMLAttributes<HTMLInputElement> & { label: string; hint?: ReactNode; error?: string }) {
  const id = useId();
  return (
    <div className="flex min-w-0 flex-col gap-1">
      <label htmlFor={id} className="text-sm font-medium text-ink">
        {label}
      </label>
      <input id={id} aria-invalid={error ? true : undefined} aria-describedby={error ? `${id}-err` : undefined} {...props} className={controlClass(Boolean(error))} />
      {hint && <p className="text-xs text-ink-soft">{hint}</p>}
      <FieldProblem id={`${id}-err`} message={error} />
    </div>
  );
}

export function ChoiceField({
  label,
  error,
  children,
  ...props
}: SelectHTMLAttributes<HTMLSelectElement> & { label: string; error?: string }) {
  const id = useId();
  return (
    <div className="flex min-w-0 flex-col gap-1">
      <label htmlFor={id} className="text-sm font-medium text-ink">
        {label}
      </label>
      <select id={id} aria-invalid={error ? true : undefined} aria-describedby={error ? `${id}-err` : undefined} {...props} className={controlClass(Boolean(error))}>
        {children}
      </select>
      <FieldProblem id={`${id}-err`} message={error} />
    </div>
  );
}

export function CheckField({ label, ...props }: InputHTMLAttributes<HTMLInputElement> & { label: string }) {
  const id = useId();
  return (
    <div className="flex items-center gap-2">
      <input id={id} type="checkbox" {...props} className="size-4 accent-cut" />
      <label htmlFor={id} className="text-sm text-ink">
        {label}
      </label>
    </div>
  );
}
