import { useState } from 'react';
import { Link, useNavigate, useParams } from 'react-router-dom';
import { Button, ErrorNote, Loading, PageHeader, Panel } from '../../../components/ui';
import { formatDateTime } from '../../../components/format';
import { useWorkspace } from '../../workspaces/api/get-workspace';
import { useCanWrite } from '../../runs/components/use-can-write';
import { useArchiveRecipe } from '../api/archive-recipe';
import { useDuplicateRecipe } from '../api/duplicate-recipe';
import { useRecipes } from '../api/get-recipes';

export function RecipesPage() {
  const { workspaceId = '' } = useParams();
  const workspace = useWorkspace(workspaceId);
  const canWrite = useCanWrite(workspaceId);
  const [archived, setArchived] = useState(false);
  const recipes = useRecipes(workspaceId, archived);
  const duplicate = useDuplicateRecipe(workspaceId);
  const archive = useArchiveRecipe(workspaceId);
  const navigate = useNavigate();

  return (
    <>
      <PageHeader eyebrow={workspace.data?.name} title="Recipes">
        {canWrite && (
          <Link to="new" className="inline-flex items-center rounded-md bg-cut px-4 py-2 text-sm font-semibold text-white shadow-sm hover:bg-cut-deep">
            New recipe
          </Link>
        )}
      </PageHeader>
      <p className="mb-6 max-w-2xl text-ink-soft">
        Reusable print settings. Every save makes a new version; a run keeps the version it used.
        {!canWrite && ' Your role can read recipes but not change them.'}
      </p>
      <Panel>
        <div className="mb-4 flex flex-wrap items-center justify-between gap-3">
          <div role="group" aria-label="Which recipes" className="inline-flex rounded-md border border-line p-0.5">
            {[false, true].map((value) => (
              <button
                key={String(value)}
                type="button"
                aria-pressed={archived === value}
                onClick={() => setArchived(value)}
                className={`rounded px-3 py-1 text-sm font-medium ${archived === value ? 'bg-plum text-paper' : 'text-ink-soft hover:bg-paper-deep'}`}
              >
                {value ? 'Archived' : 'Active'}
              </button>
            ))}
          </div>
        </div>
        {recipes.isPending ? (
          <Loading what="recipes" />
        ) : recipes.error ? (
          <ErrorNote error={recipes.error} />
        ) : recipes.data.length === 0 ? (
          <p className="text-sm text-ink-soft">
            {archived ? 'No archived recipes.' : canWrite ? 'No recipes yet. Start with "New recipe": the defaults make a poker deck at 300 DPI.' : 'No recipes yet.'}
          </p>
        ) : (
          <table className="w-full text-left text-sm">
            <thead className="text-ink-soft">
              <tr>
                <th className="pb-2 font-medium">Name</th>
                <th className="pb-2 font-medium">Version</th>
                <th className="pb-2 font-medium">Updated</th>
                {canWrite && <th className="pb-2 font-medium"><span className="sr-only">Actions</span></th>}
              </tr>
            </thead>
            <tbody>
              {recipes.data.map((r) => (
                <tr key={r.id} className="border-t border-line/70">
                  <td className="py-3">
                    <Link to={r.id} className="font-semibold text-ink underline-offset-4 hover:text-cut hover:underline">
                      {r.name}
                    </Link>
                    <span className="ml-2 font-mono text-xs text-ink-soft">{r.slug}</span>
                  </td>
                  <td className="py-3 font-mono text-xs">v{r.version}</td>
                  <td className="py-3 text-ink-soft">{formatDateTime(r.updatedAt)}</td>
                  {canWrite && (
                    <td className="py-3 text-right">
                      <span className="inline-flex gap-2">
                        <Button
                          tone="quiet"
                          className="px-3 py-1"
                          aria-label={`Duplicate ${r.name}`}
                          disabled={duplicate.isPending}
                          onClick={() => duplicate.mutate(r.id, { onSuccess: (copy) => navigate(copy.id) })}
                        >
                          Duplicate
                        </Button>
                        <Button
                          tone="danger"
                          className="px-3 py-1"
                          aria-label={`${r.archived ? 'Unarchive' : 'Archive'} ${r.name}`}
                          disabled={archive.isPending}
                          onClick={() => archive.mutate({ recipeId: r.id, archived: !r.archived })}
                        >
                          {r.archived ? 'Unarchive' : 'Archive'}
                        </Button>
                      </span>
                    </td>
                  )}
                </tr>
              ))}
            </tbody>
          </table>
        )}
        <div className="mt-4 space-y-2">
          <ErrorNote error={duplicate.error} />
          <ErrorNote error={archive.error} />
        </div>
      </Panel>
    </>
  );
}
