import { useState, type FormEvent } from 'react';
import { Button, ErrorNote, Loading, Panel } from '../../../components/ui';
import { InputField } from '../../../components/fields';
import { formatDateTime } from '../../../components/format';
import { ApiError } from '../../../lib/api';
import { useCreateShare } from '../api/create-share';
import { useShares } from '../api/get-shares';
import { useRevokeShare } from '../api/revoke-share';
import type { ShareCreated, ShareRow } from '../api/types';

function shareStatus(s: ShareRow, now: number): string {
  if (s.revokedAt) return `revoked ${formatDateTime(s.revokedAt)}`;
  if (new Date(s.expiresAt).getTime() <= now) return `expired ${formatDateTime(s.expiresAt)}`;
  return `expires ${formatDateTime(s.expiresAt)}`;
}

/** Expiring, revocable links to the run's bundle for people without an account (owners and makers). */
export function ShareLinksPanel({ workspaceId, runId, ready }: { workspaceId: string; runId: string; ready: boolean }) {
  const shares = useShares(workspaceId, runId, true);
  const create = useCreateShare(workspaceId, runId);
  const revoke = useRevokeShare(workspaceId, runId);
  const [hours, setHours] = useState(72);
  const [label, setLabel] = useState('');
  const [created, setCreated] = useState<ShareCreated | null>(null);
  const [copied, setCopied] = useState(false);
  const now = Date.now();

  const submit = (e: FormEvent) => {
    e.preventDefault();
    setCopied(false);
    create.mutate(
      { expiresInHours: hours, ...(label.trim() ? { label: label.trim() } : {}) },
      {
        onSuccess: (share) => {
          setCreated(share);
          setLabel('');
        },
      },
    );
  };
  const copy = async (url: string) => {
    try {
      await navigator.clipboard.writeText(url);
      setCopied(true);
    } catch {
      // Clipboard access can be refused (plain http, permissions): the link stays selectable in the field.
      setCopied(false);
    }
  };
  const hoursError =
    create.error instanceof ApiError ? create.error.details?.find((d) => d.path === 'expiresInHours')?.message : undefined;

  return (
    <Panel title="Share links">
      {!ready ? (
        <p className="text-sm text-ink-soft">Share links can be made once the run is done.</p>
      ) : (
        <form onSubmit={submit} className="space-y-3">
          <p className="text-sm text-ink-soft">A link anyone can open without an account to download this run's files, until it expires or you revoke it.</p>
          <div className="grid grid-cols-[7rem_1fr] gap-3">
            <InputField label="Expires in (hours)" type="number" min={1} max={720} step={1} required value={Number.isNaN(hours) ? '' : hours} error={hoursError} onChange={(e) => setHours(e.target.valueAsNumber)} />
            <InputField label="Label (optional)" placeholder="e.g. for the playtest group" value={label} maxLength={120} onChange={(e) => setLabel(e.target.value)} />
          </div>
          <ErrorNote error={hoursError ? null : create.error} />
          <Button type="submit" disabled={create.isPending}>
            {create.isPending ? 'Creating…' : 'Create share link'}
          </Button>
        </form>
      )}
      {created && (
        <div className="mt-4 rounded-md bg-proof-soft p-3" role="status">
          <p className="text-sm font-medium text-proof">Link created. Copy it now: it is shown only once.</p>
          <div className="mt-2 flex gap-2">
            <label htmlFor="share-url" className="sr-only">
              Share link URL
            </label>
            <input id="share-url" readOnly value={created.url} onFocus={(e) => e.target.select()} className="min-w-0 flex-1 rounded border border-line bg-white px-2 py-1 font-mono text-xs" />
            <Button type="button" tone="quiet" className="px-3 py-1" onClick={() => void copy(created.url)}>
              {copied ? 'Copied' : 'Copy'}
            </Button>
          </div>
        </div>
      )}
      <div className="mt-5">
        {shares.isPending ? (
          <Loading what="share links" />
        ) : shares.error ? (
          <ErrorNote error={shares.error} />
        ) : shares.data.length === 0 ? (
          <p className="text-sm text-ink-soft">No share links yet.</p>
        ) : (
          <ul className="space-y-2 text-sm" aria-label="Share links">
            {shares.data.map((s) => {
              const active = !s.revokedAt && new Date(s.expiresAt).getTime() > now;
              return (
                <li key={s.id} className="flex items-start justify-between gap-3 border-t border-line/70 pt-2">
                  <div>
                    <p className="font-medium">{s.label || 'Unlabelled link'}</p>
                    <p className="text-xs text-ink-soft">
                      {shareStatus(s, now)} · {s.downloads} download{s.downloads === 1 ? '' : 's'}
                    </p>
                  </div>
                  {active && (
                    <Button
                      tone="danger"
                      className="px-2 py-1 text-xs"
                      aria-label={`Revoke ${s.label || 'link'} created ${formatDateTime(s.createdAt)}`}
                      disabled={revoke.isPending}
                      onClick={() => revoke.mutate(s.id)}
                    >
                      Revoke
                    </Button>
                  )}
                </li>
              );
            })}
          </ul>
        )}
        <ErrorNote error={revoke.error} />
      </div>
    </Panel>
  );
}
