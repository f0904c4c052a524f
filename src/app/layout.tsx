import { NavLink, Navigate, Outlet, useLocation, useNavigate, useParams } from 'react-router-dom';
import { ErrorNote, Loading, RoleBadge } from '../components/ui';
import { ApiError } from '../lib/api';
import { useSession } from '../features/auth/api/get-session';
import { useSignOut } from '../features/auth/api/sign-out';
import { useWorkspace } from '../features/workspaces/api/get-workspace';
import { useWorkspaces } from '../features/workspaces/api/get-workspaces';

/** Signed-in pages: a 401 anywhere sends the browser to sign-in and back afterwards. */
export function RequireSession() {
  const session = useSession();
  const location = useLocation();
  if (session.isPending) return <Loading what="your session" />;
  if (!session.data?.user) return <Navigate to={`/sign-in?next=${encodeURIComponent(location.pathname)}`} replace />;
  return <Outlet />;
}

const navClass = ({ isActive }: { isActive: boolean }) =>
  `block rounded-md px-3 py-2 text-sm font-medium transition-colors ${
    isActive ? 'bg-paper text-plum' : 'text-paper/80 hover:bg-plum-light hover:text-paper'
  }`;

export function WorkspaceLayout() {
  const { workspaceId = '' } = useParams();
  const session = useSession();
  const workspace = useWorkspace(workspaceId);
  const workspaces = useWorkspaces();
  const signOut = useSignOut();
  const navigate = useNavigate();
  const role = workspace.data?.role;

  const notFound = workspace.error instanceof ApiError && workspace.error.status === 404;

  return (
    <div className="flex min-h-screen flex-col md:flex-row">
      <aside className="flex shrink-0 flex-col bg-plum text-paper md:sticky md:top-0 md:h-screen md:w-64">
        <div className="border-b border-plum-light px-5 py-5">
          <p className="font-mono text-xs uppercase tracking-[0.3em] text-cut">Bleedwright</p>
          {workspaces.data && workspaces.data.length > 1 ? (
            <select
              aria-label="Workspace"
              value={workspaceId}
              onChange={(e) => navigate(`/w/${e.target.value}`)}
              className="mt-3 w-full rounded-md border border-plum-light bg-plum px-2 py-1.5 text-sm font-semibold"
            >
              {workspaces.data.map((w) => (
                <option key={w.id} value={w.id}>
                  {w.name}
                </option>
              ))}
            </select>
          ) : (
            <p className="mt-3 text-lg font-semibold leading-tight">{workspace.data?.name ?? ' '}</p>
          )}
        </div>
        <nav aria-label="Workspace" className="flex-1 space-y-1 px-3 py-4">
          <NavLink end to={`/w/${workspaceId}`} className={navClass}>
            Home
          </NavLink>
          <NavLink to="recipes" className={navClass}>
            Recipes
          </NavLink>
          <NavLink to="art-sets" className={navClass}>
            Art sets
          </NavLink>
          <NavLink to="runs" className={navClass}>
            Runs
          </NavLink>
          <NavLink to="plan" className={navClass}>
            Print planner
          </NavLink>
          <NavLink to="price-sheets" className={navClass}>
            Price sheets
          </NavLink>
          <NavLink to="tokens" className={navClass}>
            API tokens
          </NavLink>
          {role && role !== 'helper' && (
            <NavLink to="members" className={navClass}>
              Members
            </NavLink>
          )}
          {role === 'owner' && (
            <NavLink to="mail" className={navClass}>
              Captured mail
            </NavLink>
          )}
        </nav>
        <div className="border-t border-plum-light px-5 py-4 text-sm">
          <p className="font-medium">{session.data?.user?.name}</p>
          <p className="mt-0.5 flex items-center gap-2 text-paper/70">
            <span className="truncate">{session.data?.user?.email}</span>
            {role && <RoleBadge role={role} />}
          </p>
          <button
            type="button"
            onClick={() => signOut.mutate(undefined, { onSuccess: () => navigate('/sign-in', { replace: true }) })}
            className="mt-3 text-sm font-semibold text-cut underline-offset-4 hover:underline"
          >
            Sign out
          </button>
        </div>
      </aside>
      <main className="flex-1 px-6 py-8 md:px-12 md:py-12">
        {notFound ? (
          <ErrorNote error={new Error('This workspace does not exist, or you are not a member of it.')} />
        ) : (
          <div className="mx-auto max-w-6xl">
            <Outlet />
          </div>
        )}
      </main>
    </div>
  );
}
