import { createBrowserRouter } from 'react-router-dom';
import { SignInPage } from '../features/auth/components/sign-in-page';
import { AcceptInvitePage } from '../features/invites/components/accept-invite-page';
import { MailPage } from '../features/mail/components/mail-page';
import { MembersPage } from '../features/members/components/members-page';
import { ArtSetPage } from '../features/art-sets/components/art-set-page';
import { ArtSetsPage } from '../features/art-sets/components/art-sets-page';
import { RecipeEditorPage } from '../features/recipes/components/recipe-editor-page';
import { RecipesPage } from '../features/recipes/components/recipes-page';
import { RunPage } from '../features/runs/components/run-page';
import { RunsPage } from '../features/runs/components/runs-page';
import { PublicSharePage } from '../features/shares/components/public-share-page';
import { RootRedirect } from '../features/workspaces/components/root-redirect';
import { HomePage } from '../features/home/components/home-page';
import { RecipePreviewPage } from '../features/recipe-preview/components/recipe-preview-page';
import { PlannerPage } from '../features/planner/components/planner-page';
import { PriceSheetsPage } from '../features/price-sheets/components/price-sheets-page';
import { TokensPage } from '../features/tokens/components/tokens-page';
import { DeckPage } from '../features/deck/components/deck-page';
import { ProofViewerPage } from '../features/proof-viewer/components/proof-viewer-page';
import { RequireSession, WorkspaceLayout } from './layout';

export const router = createBrowserRouter([
  { path: '/', element: <RootRedirect /> },
  { path: '/sign-in', element: <SignInPage /> },
  { path: '/invite/:token', element: <AcceptInvitePage /> },
  // Share links work signed out: outside RequireSession on purpose.
  { path: '/s/:token', element: <PublicSharePage /> },
  {
    element: <RequireSession />,
    children: [
      {
        path: '/w/:workspaceId',
        element: <WorkspaceLayout />,
        children: [
          { index: true, element: <HomePage /> },
          { path: 'members', element: <MembersPage /> },
          { path: 'mail', element: <MailPage /> },
          { path: 'recipes', element: <RecipesPage /> },
          { path: 'recipes/new', element: <RecipeEditorPage /> },
          { path: 'recipes/:recipeId', element: <RecipeEditorPage /> },
          { path: 'art-sets', element: <ArtSetsPage /> },
          { path: 'art-sets/:artSetId', element: <ArtSetPage /> },
          { path: 'runs', element: <RunsPage /> },
          { path: 'runs/:runId', element: <RunPage /> },
          { path: 'runs/:runId/deck', element: <DeckPage /> },
          { path: 'runs/:runId/plan', element: <PlannerPage /> },
          { path: 'runs/:runId/cards/:cardId', element: <ProofViewerPage /> },
          { path: 'preview', element: <RecipePreviewPage /> },
          { path: 'plan', element: <PlannerPage /> },
          { path: 'price-sheets', element: <PriceSheetsPage /> },
          { path: 'tokens', element: <TokensPage /> },
        ],
      },
    ],
  },
  { path: '*', element: <RootRedirect /> },
]);
