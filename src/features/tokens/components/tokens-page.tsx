// API tokens for scripts and build pipelines: a member names a token, sees it once, and can revoke it.
// A token acts with the member's current role in this workspace only.
import { useState, type FormEvent } from 'react';
import { useParams } from 'react-router-dom';
import { InputField } from '../../../components/fields';
import { formatDateTime } from '../../../components/format';
import { Button, ErrorNote, Loading, PageHeader, Panel } from '../../../components/ui';
import { ApiError } from '../../../lib/api';
import { useCreateToken } from '../api/create-token';
import { useTokens } from '../api/get-tokens';
import { useRevokeToken } from '../api/revoke-token';

export function TokensPage() {
  const { workspaceId = '' } = useParams();
  const tokens = useTokens(workspaceId);
  const create = useCreateToken(workspaceId);
  const revoke = useRevokeToken(workspaceId);
  const [name, setName] = useState('');
  const [shown, setShown] = useState<{ name: string; secret: string } | null>(null);
  const [copied, setCopied] = useState(false);

  const fieldError = create.error instanceof ApiError ? create.error.details?.find((d) => d.path === 'name')?.message : undefined;

  async function onSubmit(e: FormEvent) {
    e.preventDefault();
    const made = await create.mutateAsync({ name }).catch(() => null);
    if (made) {
      setShown({ name: made.token.name, secret: made.secret });
      setCopied(false);
      setName('');
    }
  }

  return (
    <>
      <PageHeader eyebrow="Scripts and pipelines" title="API tokens" />
      <p className="mb-6 max-w-2xl text-ink-soft">
        A token lets a script upload art sets, start runs and download files as you, with your role in this workspace. Send it as{' '}
        <code className="font-mono text-sm">Authorization: Bearer bw_…</code>. If you leave the workspace or revoke the token, it stops working.
      </p>
      <div className="grid items-start gap-8 xl:grid-cols-[1fr_1fr]">
        <Panel title="New token">
          <form onSubmit={onSubmit} className="space-y-4">
            <InputField label="Name" hint="What uses it, e.g. “nightly build”" value={name} onChange={(e) => setName(e.target.value)} error={fieldError} maxLength={80} required />
            {create.error && !fieldError && <ErrorNote error={create.error} />}
            <Button type="submit" disabled={create.isPending}>
              {create.isPending ? 'Making…' : 'Make token'}
            </Button>
          </form>
          {shown && (
            <div role="status" className="mt-6 space-y-2 rounded-md border border-cut/40 bg-paper-deep p-4">
              <p className="text-sm font-semibold text-ink">Copy “{shown.name}” now: it is shown only this once.</p>
              <code data-testid="new-token" className="block break-all rounded bg-white p-2 font-mono text-sm">
                {shown.secret}
              </code>
              <div className="flex gap-2">
                <Button
                  tone="quiet"
                  type="button"
                  onClick={() => navigator.clipboard?.writeText(shown.secret).then(() => setCopied(true), () => setCopied(false))}
                >
                  {copied ? 'Copied' : 'Copy'}
                </Button>
                <Button tone="quiet" type="button" onClick={() => setShown(null)}>
                  Done
                </Button>
              </div>
            </div>
          )}
        </Panel>
        <Panel title="Your tokens">
          {tokens.isPending ? (
            <Loading what="tokens" />
          ) : tokens.error ? (
            <ErrorNote error={tokens.error} />
          ) : tokens.data.length === 0 ? (
            <p className="text-ink-soft">No tokens yet.</p>
          ) : (
            <table className="w-full text-left text-sm">
              <thead className="text-ink-soft">
                <tr>
                  <th className="py-2 font-medium">Name</th>
                  <th className="py-2 font-medium">Starts with</th>
                  <th className="py-2 font-medium">Made</th>
                  <th className="py-2 font-medium">Last used</th>
                  <th className="py-2" />
                </tr>
              </thead>
              <tbody>
                {tokens.data.map((t) => (
                  <tr key={t.id} className="border-t border-line">
                    <td className="py-2 font-medium text-ink">{t.name}</td>
                    <td className="py-2 font-mono">{t.prefix}…</td>
                    <td className="py-2">{formatDateTime(t.createdAt)}</td>
                    <td className="py-2">{t.lastUsedAt ? formatDateTime(t.lastUsedAt) : 'never'}</td>
                    <td className="py-2 text-right">
                      {t.revokedAt ? (
                        <span className="text-ink-soft">revoked</span>
                      ) : (
                        <Button tone="danger" type="button" disabled={revoke.isPending} onClick={() => revoke.mutate(t.id)}>
                          Revoke
                        </Button>
                      )}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          )}
        </Panel>
      </div>
    </>
  );
}
