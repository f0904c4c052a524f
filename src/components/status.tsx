// Badges and bars for runs, cards and findings, in the foundation's palette.
import type { ReactNode } from 'react';

type Severity = 'info' | 'warn' | 'error';

const stateTone: Record<string, string> = {
  queued: 'bg-paper-deep text-ink ring-1 ring-line',
  running: 'bg-plum text-paper',
  done: 'bg-proof text-white',
  failed: 'bg-cut-deep text-white',
  canceled: 'bg-ink-soft text-white',
  pending: 'bg-paper-deep text-ink ring-1 ring-line',
  rendering: 'bg-plum text-paper',
  skipped: 'bg-amber-200 text-amber-950',
};

/** A run or card state as a small pill; the text is the state's own word. */
export function StateBadge({ state }: { state: string }) {
  return (
    <span data-state={state} className={`inline-block rounded-full px-2.5 py-0.5 font-mono text-xs font-medium ${stateTone[state] ?? 'bg-paper-deep text-ink'}`}>
      {state}
    </span>
  );
}

export const severityTone: Record<Severity, string> = {
  info: 'bg-sky-100 text-sky-900 ring-1 ring-sky-300',
  warn: 'bg-amber-100 text-amber-950 ring-1 ring-amber-400',
  error: 'bg-cut/15 text-cut-deep ring-1 ring-cut/50',
};

export function SeverityBadge({ severity, children }: { severity: Severity; children?: ReactNode }) {
  return (
    <span className={`inline-flex items-center gap-1 rounded px-1.5 py-0.5 font-mono text-xs font-medium ${severityTone[severity]}`}>
      {children ?? severity}
    </span>
  );
}

/** Counts of findings by severity, zeros shown quietly. */
export function FindingCounts({ findings }: { findings: Record<Severity, number> }) {
  return (
    <span className="inline-flex gap-1.5" aria-label={`${findings.error} errors, ${findings.warn} warnings, ${findings.info} notes`}>
      {(['error', 'warn', 'info'] as const).map((s) =>
        findings[s] > 0 ? (
          <SeverityBadge key={s} severity={s}>
            {findings[s]} {s}
          </SeverityBadge>
        ) : null,
      )}
      {findings.error + findings.warn + findings.info === 0 && <span className="text-xs text-ink-soft">none</span>}
    </span>
  );
}

/** A determinate progress bar; `value` of `max`. Uses role=progressbar so it is announced. */
export function ProgressBar({ value, max, label, tone = 'cut' }: { value: number; max: number; label: string; tone?: 'cut' | 'proof' }) {
  const share = max > 0 ? Math.min(1, Math.max(0, value / max)) : 0;
  return (
    <div
      role="progressbar"
      aria-label={label}
      aria-valuemin={0}
      aria-valuemax={max}
      aria-valuenow={value}
      className="h-2.5 w-full overflow-hidden rounded-full bg-paper-deep ring-1 ring-line"
    >
      <div
        className={`h-full rounded-full transition-[width] duration-500 ${tone === 'proof' ? 'bg-proof' : 'bg-cut'}`}
        style={{ width: `${(share * 100).toFixed(1)}%` }}
      />
    </div>
  );
}
