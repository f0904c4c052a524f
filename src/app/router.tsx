import { createBrowserRouter } from 'react-router-dom';
import { SignInPage } from '../features/auth/components/sign-in-page';
import { AcceptInvitePage } from '../features/invites/components/accept-invite-page';
import { MailPage } from '../features/mail/components/mail-page';
import { MembersPage } from '../features/members/components/members-page';
import { ComingSoon } from '../features/placeholders/components/coming-soon';
import { RootRedirect } from '../features/workspaces/components/root-redirect';
import { WorkspaceHome } from '../features/workspaces/components/workspace-home';
import { RequireSession, WorkspaceLayout } from './layout';

export const router = createBrowserRouter([
  { path: '/', element: <RootRedirect /> },
  { path: '/sign-in', element: <SignInPage /> },
  { path: '/invite/:token', element: <AcceptInvitePage /> },
  {
    element: <RequireSession />,
    children: [
      {
        path: '/w/:workspaceId',
        element: <WorkspaceLayout />,
        children: [
          { index: true, element: <WorkspaceHome /> },
          { path: 'members', element: <MembersPage /> },
          { path: 'mail', element: <MailPage /> },
          { path: 'recipes', element: <ComingSoon page="recipes" /> },
          { path: 'art-sets', element: <ComingSoon page="art-sets" /> },
          { path: 'runs', element: <ComingSoon page="runs" /> },
        ],
      },
    ],
  },
  { path: '*', element: <RootRedirect /> },
]);
