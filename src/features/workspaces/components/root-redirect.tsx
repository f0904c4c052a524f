import { Navigate } from 'react-router-dom';
import { Loading, Panel } from '../../../components/ui';
import { useSession } from '../../auth/api/get-session';
import { useWorkspaces } from '../api/get-workspaces';

/** `/`: the first workspace of the signed-in account, or the sign-in page. */
export function RootRedirect() {
  const session = useSession();
  const signedIn = Boolean(session.data?.user);
  const workspaces = useWorkspaces(signedIn);
  if (session.isPending) return <Loading what="your session" />;
  if (!signedIn) return <Navigate to="/sign-in" replace />;
  if (workspaces.isPending) return <Loading what="workspaces" />;
  const first = workspaces.data?.[0];
  if (first) return <Navigate to={`/w/${first.id}`} replace />;
  return (
    <div className="mx-auto mt-24 max-w-md">
      <Panel title="No workspace yet">
        <p className="text-ink-soft">Your account is not a member of any workspace. Ask a workspace owner to invite you.</p>
      </Panel>
    </div>
  );
}
