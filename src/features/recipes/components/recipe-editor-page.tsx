import { useMemo, useState, type FormEvent } from 'react';
import { Link, useLocation, useNavigate, useParams } from 'react-router-dom';
import { Button, ErrorNote, Loading, PageHeader, Panel } from '../../../components/ui';
import { formatDateTime } from '../../../components/format';
import { ApiError } from '../../../lib/api';
import { recipeSchema, type Recipe } from '../../../../shared/recipe';
import { useCanWrite } from '../../runs/components/use-can-write';
import type { RecipeDetail } from '../../runs/api/types';
import { useRecipe } from '../api/get-recipe';
import { useRecipeVersion } from '../api/get-recipe-version';
import { useSaveRecipe } from '../api/save-recipe';
import { GeometryPanel, RecipeForm, issuesByPath, labelFor, type Issues } from './recipe-form';
import { RecipePreview } from '../../recipe-preview/components/recipe-preview';

type SavedNote = { recipeId: string; text: string };

/** A new recipe starts from the schema's own defaults (poker, 1/8 in bleed, 300 DPI). */
function defaultRecipe(): Recipe {
  return { ...recipeSchema.parse({ name: 'New recipe' }), name: '' };
}

export function RecipeEditorPage() {
  const { workspaceId = '', recipeId } = useParams();
  const recipe = useRecipe(workspaceId, recipeId);
  const location = useLocation();
  const savedAfterCreate = (location.state as { saved?: number } | null)?.saved;
  // The save and its note live here, above the form that remounts on each new version, so the
  // callbacks still run and "Saved as version N" survives the remount.
  const save = useSaveRecipe(workspaceId, recipeId ?? null);
  const [saved, setSaved] = useState<SavedNote | null>(savedAfterCreate && recipeId ? { recipeId, text: `Saved as version ${savedAfterCreate}.` } : null);

  if (recipeId && recipe.isPending) return <Loading what="the recipe" />;
  if (recipeId && recipe.error) return <ErrorNote error={recipe.error} />;
  const detail = recipe.data ?? null;
  return (
    <EditorBody
      // Remount the form whenever a different recipe or version is loaded, so it starts from its settings.
      key={detail ? `${detail.id}:${detail.version}` : 'new'}
      workspaceId={workspaceId}
      detail={detail}
      // Shown only beside the recipe it belongs to, not on the "new" form it came from.
      note={saved && saved.recipeId === detail?.id ? saved.text : null}
      setNote={setSaved}
      save={save}
    />
  );
}

function EditorBody({
  workspaceId,
  detail,
  note,
  setNote,
  save,
}: {
  workspaceId: string;
  detail: RecipeDetail | null;
  note: string | null;
  setNote: (note: SavedNote | null) => void;
  save: ReturnType<typeof useSaveRecipe>;
}) {
  const canWrite = useCanWrite(workspaceId);
  const navigate = useNavigate();
  const [form, setForm] = useState<Recipe>(() => (detail ? detail.settings : defaultRecipe()));
  const [tried, setTried] = useState(false);
  const [serverIssues, setServerIssues] = useState<Issues>({});

  const parsed = useMemo(() => recipeSchema.safeParse(form), [form]);
  const clientIssues = useMemo(() => (parsed.success ? {} : issuesByPath(parsed.error.issues)), [parsed]);
  const issues: Issues = { ...(tried ? clientIssues : {}), ...serverIssues };
  const issueList = Object.entries(issues);

  const change = (next: Recipe) => {
    setForm(next);
    setServerIssues({});
    setNote(null);
  };

  const submit = (e: FormEvent) => {
    e.preventDefault();
    setTried(true);
    setNote(null);
    if (!parsed.success) return;
    const before = detail?.version;
    save.mutate(form, {
      onSuccess: (saved) => {
        setNote({
          recipeId: saved.id,
          text: saved.version === before ? `Nothing changed: still version ${saved.version}.` : `Saved as version ${saved.version}.`,
        });
        if (!detail) navigate(`../recipes/${saved.id}`, { replace: true, state: { saved: saved.version } });
      },
      onError: (err) => {
        // The body is `{ settings }`, so the server's paths start with "settings.".
        if (err instanceof ApiError && err.details) setServerIssues(issuesByPath(err.details.map((d) => ({ ...d, path: d.path.replace(/^settings\./, '') }))));
      },
    });
  };

  return (
    <>
      <PageHeader eyebrow={detail ? `Recipe · version ${detail.version}` : 'Recipe'} title={detail ? detail.name : 'New recipe'}>
        <Link to=".." relative="path" className="text-sm font-semibold text-cut underline-offset-4 hover:underline">
          All recipes
        </Link>
      </PageHeader>
      {detail?.archived && <p className="mb-4 rounded-md bg-paper-deep px-3 py-2 text-sm">This recipe is archived. It can still be read and used by earlier runs.</p>}
      <form onSubmit={submit} noValidate className="grid items-start gap-8 xl:grid-cols-[1fr_22rem]">
        <Panel title="Settings">
          <RecipeForm value={form} onChange={change} issues={issues} readOnly={!canWrite} />
        </Panel>
        <div className="space-y-6 xl:sticky xl:top-8">
          <Panel title="Preview">
            <RecipePreview settings={form} />
          </Panel>
          <Panel title="Page geometry">
            <GeometryPanel recipe={form} sizeIssue={Object.keys(clientIssues).some((k) => /^(trim|bleed|safe|dpi)\b/.test(k))} />
          </Panel>
          {canWrite && (
            <Panel title="Save">
              {issueList.length > 0 && (
                <div role="alert" className="mb-4 rounded-md border border-cut/40 bg-cut/10 px-3 py-2 text-sm text-cut-deep">
                  <p className="font-semibold">Please fix:</p>
                  <ul className="mt-1 list-inside list-disc">
                    {issueList.map(([path, message]) => (
                      <li key={path}>
                        {labelFor(path)} {message}
                      </li>
                    ))}
                  </ul>
                </div>
              )}
              {save.error && !(save.error instanceof ApiError && save.error.details) && <ErrorNote error={save.error} />}
              {note && (
                <p role="status" className="mb-4 rounded-md bg-proof-soft px-3 py-2 text-sm font-medium text-proof">
                  {note}
                </p>
              )}
              <Button type="submit" disabled={save.isPending} className="w-full">
                {save.isPending ? 'Saving…' : detail ? 'Save as a new version' : 'Create recipe'}
              </Button>
            </Panel>
          )}
          {detail && <VersionHistory workspaceId={workspaceId} detail={detail} onLoad={canWrite ? (s) => change(s) : undefined} />}
        </div>
      </form>
    </>
  );
}

function VersionHistory({ workspaceId, detail, onLoad }: { workspaceId: string; detail: RecipeDetail; onLoad?: (settings: Recipe) => void }) {
  const [open, setOpen] = useState<number | null>(null);
  const version = useRecipeVersion(workspaceId, detail.id, open);
  const versions = [...detail.versions].sort((a, b) => b.version - a.version);
  return (
    <Panel title="Versions">
      <ul className="space-y-1 text-sm">
        {versions.map((v) => (
          <li key={v.version} className="flex items-center justify-between gap-2">
            <span>
              <span className="font-mono font-medium">v{v.version}</span>
              <span className="ml-2 text-ink-soft">{formatDateTime(v.createdAt)}</span>
            </span>
            <button
              type="button"
              aria-expanded={open === v.version}
              onClick={() => setOpen(open === v.version ? null : v.version)}
              className="text-xs font-semibold text-cut underline-offset-4 hover:underline"
            >
              {open === v.version ? 'Hide' : 'View'} v{v.version}
            </button>
          </li>
        ))}
      </ul>
      {open !== null && (
        <div className="mt-4">
          {version.isPending ? (
            <Loading what={`version ${open}`} />
          ) : version.error ? (
            <ErrorNote error={version.error} />
          ) : (
            <>
              <pre className="max-h-80 overflow-auto rounded bg-plum p-3 font-mono text-xs text-paper" aria-label={`Settings of version ${open}`}>
                {JSON.stringify(version.data.settings, null, 2)}
              </pre>
              {onLoad && open !== detail.version && (
                <Button type="button" tone="quiet" className="mt-2 px-3 py-1" onClick={() => onLoad(version.data.settings)}>
                  Load v{open} into the form
                </Button>
              )}
            </>
          )}
        </div>
      )}
    </Panel>
  );
}
