import { useParams } from 'react-router-dom';
import { ErrorNote, Loading, PageHeader, Panel } from '../../../components/ui';
import { useMail } from '../api/get-mail';

const URL_PATTERN = /(https?:\/\/[^\s]+)/g;

/** Links in a plain-text message become clickable; everything else stays text. */
function MailText({ text }: { text: string }) {
  return (
    <p className="whitespace-pre-wrap text-sm leading-relaxed">
      {text.split(URL_PATTERN).map((part, i) =>
        i % 2 === 1 ? (
          <a key={i} href={part} className="break-all font-mono text-xs font-semibold text-cut underline">
            {part}
          </a>
        ) : (
          part
        ),
      )}
    </p>
  );
}

export function MailPage() {
  const { workspaceId = '' } = useParams();
  const mail = useMail(workspaceId);
  return (
    <>
      <PageHeader eyebrow="Demo" title="Captured mail" />
      <p className="mb-6 max-w-2xl text-sm text-ink-soft">
        In the demo, mail does not leave this machine: a small mail catcher started by <code className="font-mono">npm start</code> keeps it,
        and this page lists what was sent for this workspace, newest first.
      </p>
      <ErrorNote error={mail.error} />
      {mail.isPending ? (
        <Loading what="mail" />
      ) : mail.data?.length ? (
        <ul className="space-y-6">
          {mail.data.map((m) => (
            <li key={m.id}>
              <Panel>
                <article aria-label={m.subject}>
                  <h2 className="text-lg font-semibold">{m.subject}</h2>
                  <p className="mb-4 mt-1 font-mono text-xs text-ink-soft">
                    to {m.to.join(', ')} · {new Date(m.receivedAt).toLocaleString()}
                  </p>
                  <MailText text={m.text} />
                </article>
              </Panel>
            </li>
          ))}
        </ul>
      ) : (
        <p className="text-sm text-ink-soft">No mail yet. Invite someone from the Members page and it shows up here.</p>
      )}
    </>
  );
}
