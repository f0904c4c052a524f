import { useParams } from 'react-router-dom';
import { Loading, Panel } from '../../../components/ui';
import { formatBytes, formatDateTime } from '../../../components/format';
import { ApiError } from '../../../lib/api';
import { publicShareFileUrl, usePublicShare } from '../api/get-public-share';

/** What a helper without an account sees when they open a share link: the run's files, until it expires. */
export function PublicSharePage() {
  const { token = '' } = useParams();
  const share = usePublicShare(token);
  const gone = share.error instanceof ApiError && (share.error.status === 404 || share.error.status === 410);

  return (
    <div className="min-h-screen bg-paper">
      <header className="bg-plum px-6 py-5 text-paper md:px-12">
        <p className="font-mono text-xs uppercase tracking-[0.3em] text-cut">Bleedwright</p>
        <p className="mt-1 text-sm text-paper/75">Shared print files</p>
      </header>
      <main className="mx-auto max-w-3xl px-6 py-10">
        {share.isPending ? (
          <Loading what="the shared files" />
        ) : share.error ? (
          <Panel title={gone ? 'Link no longer works' : 'Something went wrong'}>
            <p role="alert" className="text-ink">
              {gone
                ? share.error instanceof ApiError && share.error.code === 'SHARE_EXPIRED'
                  ? 'This share link has expired. Ask the person who sent it for a new one.'
                  : 'This share link has expired, was revoked, or was never valid. Ask the person who sent it for a new one.'
                : share.error.message}
            </p>
          </Panel>
        ) : (
          <>
            <p className="font-mono text-xs uppercase tracking-[0.25em] text-cut">{share.data.workspaceName}</p>
            <h1 className="mt-1 text-3xl font-bold tracking-tight">{share.data.runTitle}</h1>
            <p className="mt-2 text-sm text-ink-soft">Available until {formatDateTime(share.data.expiresAt)}. No account needed.</p>
            <Panel title="Downloads" className="mt-8">
              <ul className="space-y-2">
                {share.data.files.map((f) => (
                  <li key={f.name}>
                    <a
                      href={publicShareFileUrl(token, f.name)}
                      download={f.name}
                      className="flex items-center justify-between gap-3 rounded-md border border-line bg-white px-3 py-2 text-sm hover:border-cut"
                    >
                      <span className="font-mono font-medium">{f.name}</span>
                      <span className="shrink-0 font-mono text-xs text-ink-soft">{formatBytes(f.bytes)}</span>
                    </a>
                  </li>
                ))}
              </ul>
              <p className="mt-4 border-l-2 border-cut pl-3 text-xs leading-relaxed text-ink-soft" role="note">
                Only print art you have the rights to print. When cutting home-print sheets, blades are sharp: see the instructions page in
                the sheets PDF. Local law and professional practice come first.
              </p>
            </Panel>
          </>
        )}
      </main>
    </div>
  );
}
