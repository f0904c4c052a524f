import type { ButtonHTMLAttributes, InputHTMLAttributes, ReactNode, SelectHTMLAttributes } from 'react';
import { useId } from 'react';

type Tone = 'primary' | 'quiet' | 'danger';

const tones: Record<Tone, string> = {
  primary: 'bg-cut text-white hover:bg-cut-deep shadow-sm',
  quiet: 'bg-transparent text-ink border border-line hover:bg-paper-deep',
  danger: 'bg-transparent text-cut-deep border border-cut/40 hover:bg-cut/10',
};

export function Button({ tone = 'primary', className = '', ...props }: ButtonHTMLAttributes<HTMLButtonElement> & { tone?: Tone }) {
  return (
    <button
      {...props}
      className={`inline-flex items-center justify-center gap-2 rounded-md px-4 py-2 text-sm font-semibold transition-colors disabled:cursor-not-allowed disabled:opacity-60 ${tones[tone]} ${className}`}
    />
  );
}

export function TextField({ label, hint, ...props }: InputHTMLAttributes<HTMLInputElement> & { label: string; hint?: string }) {
  const id = useId();
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-medium text-ink">
        {label}
      </label>
      <input
        id={id}
        {...props}
        className="rounded-md border border-line bg-white px-3 py-2 text-ink placeholder:text-ink-soft/60 focus:border-cut"
      />
      {hint && <p className="text-xs text-ink-soft">{hint}</p>}
    </div>
  );
}

export function SelectField({ label, children, ...props }: SelectHTMLAttributes<HTMLSelectElement> & { label: string }) {
  const id = useId();
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-medium text-ink">
        {label}
      </label>
      <select id={id} {...props} className="rounded-md border border-line bg-white px-3 py-2 text-ink">
        {children}
      </select>
    </div>
  );
}

export function Panel({ title, children, className = '' }: { title?: string; children: ReactNode; className?: string }) {
  return (
    <section className={`crop-marks rounded-sm p-6 ${className}`}>
      {title && <h2 className="mb-4 font-mono text-xs font-medium uppercase tracking-[0.2em] text-ink-soft">{title}</h2>}
      {children}
    </section>
  );
}

export function PageHeader({ eyebrow, title, children }: { eyebrow?: string; title: string; children?: ReactNode }) {
  return (
    <header className="mb-8 flex flex-wrap items-end justify-between gap-4 border-b border-line pb-5">
      <div>
        {eyebrow && <p className="font-mono text-xs uppercase tracking-[0.25em] text-cut">{eyebrow}</p>}
        <h1 className="mt-1 text-3xl font-bold tracking-tight text-ink">{title}</h1>
      </div>
      {children}
    </header>
  );
}

export function ErrorNote({ error }: { error: unknown }) {
  if (!error) return null;
  const message = error instanceof Error ? error.message : String(error);
  return (
    <p role="alert" className="rounded-md border border-cut/40 bg-cut/10 px-3 py-2 text-sm text-cut-deep">
      {message}
    </p>
  );
}

export function RoleBadge({ role }: { role: string }) {
  const colour = role === 'owner' ? 'bg-plum text-paper ring-1 ring-cut/70' : role === 'maker' ? 'bg-proof text-white' : 'bg-paper-deep text-ink';
  return <span className={`rounded-full px-2.5 py-0.5 font-mono text-xs font-medium ${colour}`}>{role}</span>;
}

export function Loading({ what }: { what: string }) {
  return <p className="text-sm text-ink-soft">Loading {what}…</p>;
}
