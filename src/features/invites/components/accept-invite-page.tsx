import { useState, type FormEvent } from 'react';
import { Link, useNavigate, useParams } from 'react-router-dom';
import { Button, ErrorNote, Loading, Panel, RoleBadge, TextField } from '../../../components/ui';
import { useSession } from '../../auth/api/get-session';
import { useSignIn } from '../../auth/api/sign-in';
import { useAcceptInvite } from '../api/accept-invite';
import { useInvite } from '../api/get-invite';

/** `/invite/:token`: create an account (or sign in) and join the workspace. */
export function AcceptInvitePage() {
  const { token = '' } = useParams();
  const invite = useInvite(token);
  const session = useSession();
  const accept = useAcceptInvite(token);
  const signIn = useSignIn();
  const navigate = useNavigate();
  const [name, setName] = useState('');
  const [password, setPassword] = useState('');

  if (invite.isPending || session.isPending) return <Centered><Loading what="invitation" /></Centered>;
  if (invite.error) {
    return (
      <Centered>
        <Panel title="Invitation">
          <ErrorNote error={invite.error} />
          <Link to="/sign-in" className="mt-4 inline-block text-sm font-semibold text-cut underline">
            Go to sign-in
          </Link>
        </Panel>
      </Centered>
    );
  }
  const inv = invite.data!;
  const user = session.data?.user;
  const goToWorkspace = (workspaceId: string) => navigate(`/w/${workspaceId}`, { replace: true });

  const submit = async (e: FormEvent) => {
    e.preventDefault();
    if (!user && inv.accountExists) {
      await signIn.mutateAsync({ email: inv.email, password });
      accept.mutate({}, { onSuccess: (r) => goToWorkspace(r.workspaceId) });
    } else if (user) {
      accept.mutate({}, { onSuccess: (r) => goToWorkspace(r.workspaceId) });
    } else {
      accept.mutate({ name, password }, { onSuccess: (r) => goToWorkspace(r.workspaceId) });
    }
  };

  return (
    <Centered>
      <form onSubmit={(e) => void submit(e).catch(() => {})} className="crop-marks space-y-5 rounded-sm p-8">
        <p className="font-mono text-xs uppercase tracking-[0.25em] text-cut">Invitation</p>
        <h1 className="text-2xl font-bold">Join {inv.workspaceName}</h1>
        <p className="text-sm text-ink-soft">
          {inv.invitedBy ?? 'A workspace owner'} invited <span className="font-mono">{inv.email}</span> as <RoleBadge role={inv.role} />
        </p>
        {user ? (
          <p className="text-sm">Signed in as {user.email}.</p>
        ) : inv.accountExists ? (
          <TextField label="Your password" type="password" autoComplete="current-password" required value={password} onChange={(e) => setPassword(e.target.value)} />
        ) : (
          <>
            <TextField label="Your name" autoComplete="name" required value={name} onChange={(e) => setName(e.target.value)} />
            <TextField
              label="Choose a password"
              type="password"
              autoComplete="new-password"
              required
              minLength={10}
              hint="At least 10 characters."
              value={password}
              onChange={(e) => setPassword(e.target.value)}
            />
          </>
        )}
        <ErrorNote error={signIn.error ?? accept.error} />
        <Button type="submit" className="w-full" disabled={accept.isPending || signIn.isPending}>
          {user || inv.accountExists ? 'Accept invitation' : 'Create account and join'}
        </Button>
      </form>
    </Centered>
  );
}

function Centered({ children }: { children: React.ReactNode }) {
  return <main className="mx-auto flex min-h-screen max-w-md flex-col justify-center p-6">{children}</main>;
}
