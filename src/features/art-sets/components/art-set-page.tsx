import { useState, type FormEvent } from 'react';
import { Link, useNavigate, useParams, useSearchParams } from 'react-router-dom';
import { Button, ErrorNote, Loading, PageHeader, Panel } from '../../../components/ui';
import { ChoiceField } from '../../../components/fields';
import { ProgressBar } from '../../../components/status';
import { formatBytes, formatDateTime, plural } from '../../../components/format';
import { ApiError } from '../../../lib/api';
import { useCanWrite } from '../../runs/components/use-can-write';
import { useCreateRun } from '../../runs/api/create-run';
import { useRecipes } from '../../recipes/api/get-recipes';
import type { ArtSetDetail } from '../../runs/api/types';
import { useAddArtFiles } from '../api/add-art-files';
import { thumbnailUrl, useArtSet } from '../api/get-art-set';

export function ArtSetPage() {
  const { workspaceId = '', artSetId = '' } = useParams();
  const [params, setParams] = useSearchParams();
  const asked = Number(params.get('revision'));
  const revision = Number.isInteger(asked) && asked > 0 ? asked : null;
  const artSet = useArtSet(workspaceId, artSetId, revision);
  const canWrite = useCanWrite(workspaceId);

  if (artSet.isPending) return <Loading what="the art set" />;
  if (artSet.error) return <ErrorNote error={artSet.error} />;
  const a = artSet.data;
  const latest = Math.max(...a.revisions.map((r) => r.revision), a.revision);
  const showRevision = (n: number) => setParams(n === latest ? {} : { revision: String(n) }, { replace: true });

  return (
    <>
      <PageHeader eyebrow={`Art set · revision ${a.revision}${a.revision === latest ? ' (latest)' : ''}`} title={a.name}>
        <Link to=".." relative="path" className="text-sm font-semibold text-cut underline-offset-4 hover:underline">
          All art sets
        </Link>
      </PageHeader>
      <div className="grid items-start gap-8 xl:grid-cols-[1fr_22rem]">
        <div className="space-y-8">
          <Panel title="Files">
            <div className="mb-4 flex flex-wrap items-end justify-between gap-4">
              <div className="w-full max-w-sm">
                <ChoiceField label="Revision" value={a.revision} onChange={(e) => showRevision(Number(e.target.value))}>
                  {[...a.revisions]
                    .sort((x, y) => y.revision - x.revision)
                    .map((r) => (
                      <option key={r.revision} value={r.revision}>
                        r{r.revision} · {formatDateTime(r.createdAt)} · {plural(r.entryCount, 'file')}
                        {r.note ? ` · ${r.note}` : ''}
                      </option>
                    ))}
                </ChoiceField>
              </div>
              <p className="text-sm text-ink-soft">
                {plural(a.entries.filter((e) => e.kind === 'image').length, 'card image')} · {plural(a.entries.length, 'file')}
              </p>
            </div>
            <EntryTable workspaceId={workspaceId} artSet={a} />
          </Panel>
          {a.skipped.length > 0 && (
            <Panel title="Skipped">
              <p className="mb-2 text-sm text-ink-soft">Files in the zip that are not card art (system files, folders, unknown types):</p>
              <ul className="space-y-1 text-sm">
                {a.skipped.map((s) => (
                  <li key={s.path}>
                    <code className="font-mono text-xs">{s.path}</code> <span className="text-ink-soft">— {s.reason}</span>
                  </li>
                ))}
              </ul>
            </Panel>
          )}
        </div>
        {canWrite && (
          <div className="space-y-8 xl:sticky xl:top-8">
            <StartRunPanel workspaceId={workspaceId} artSet={a} />
            <AddFilesPanel workspaceId={workspaceId} artSetId={a.id} onRevision={(n) => setParams({ revision: String(n) }, { replace: true })} />
          </div>
        )}
      </div>
    </>
  );
}

function EntryTable({ workspaceId, artSet }: { workspaceId: string; artSet: ArtSetDetail }) {
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-left text-sm">
        <thead className="text-ink-soft">
          <tr>
            <th className="pb-2 font-medium">
              <span className="sr-only">Thumbnail</span>
            </th>
            <th className="pb-2 font-medium">Path</th>
            <th className="pb-2 font-medium">Kind</th>
            <th className="pb-2 font-medium">Pixels</th>
            <th className="pb-2 font-medium">Format</th>
            <th className="pb-2 text-right font-medium">Size</th>
          </tr>
        </thead>
        <tbody>
          {artSet.entries.map((e) => (
            <tr key={e.path} className="border-t border-line/70 align-middle">
              <td className="py-2 pr-3">
                {e.width !== null && (e.kind === 'image' || e.kind === 'back-candidate') ? (
                  <img
                    src={thumbnailUrl(workspaceId, artSet.id, artSet.revision, e.path)}
                    alt={`Thumbnail of ${e.path}`}
                    loading="lazy"
                    className="h-14 w-auto max-w-20 rounded-sm object-contain shadow-sm ring-1 ring-line"
                  />
                ) : (
                  <span className="inline-block h-14 w-10 rounded-sm bg-paper-deep" aria-hidden />
                )}
              </td>
              <td className="py-2 font-mono text-xs">{e.path}</td>
              <td className="py-2">
                <span className="rounded bg-paper-deep px-1.5 py-0.5 font-mono text-xs">{e.kind}</span>
              </td>
              <td className="py-2 font-mono text-xs">{e.width !== null && e.height !== null ? `${e.width} x ${e.height}` : '—'}</td>
              <td className="py-2 font-mono text-xs">{e.format ?? '—'}</td>
              <td className="py-2 text-right font-mono text-xs">{formatBytes(e.bytes)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

function StartRunPanel({ workspaceId, artSet }: { workspaceId: string; artSet: ArtSetDetail }) {
  const recipes = useRecipes(workspaceId, false);
  const createRun = useCreateRun(workspaceId);
  const navigate = useNavigate();
  const [recipeId, setRecipeId] = useState('');
  const chosen = recipeId || recipes.data?.[0]?.id || '';
  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (!chosen) return;
    createRun.mutate(
      { recipeId: chosen, artSetId: artSet.id, revision: artSet.revision },
      { onSuccess: (run) => navigate(`../../runs/${run.id}`, { relative: 'path' }) },
    );
  };
  return (
    <Panel title="Run a recipe">
      {recipes.isPending ? (
        <Loading what="recipes" />
      ) : recipes.data?.length === 0 ? (
        <p className="text-sm text-ink-soft">
          No recipes yet. <Link to="../../recipes/new" relative="path" className="font-semibold text-cut underline underline-offset-4">Create one</Link> first.
        </p>
      ) : (
        <form onSubmit={submit} className="space-y-4">
          <ChoiceField label="Recipe" value={chosen} onChange={(e) => setRecipeId(e.target.value)}>
            {recipes.data?.map((r) => (
              <option key={r.id} value={r.id}>
                {r.name} (v{r.version})
              </option>
            ))}
          </ChoiceField>
          <p className="text-xs text-ink-soft">Uses revision {artSet.revision} of this art set and the recipe's latest version.</p>
          <ErrorNote error={createRun.error} />
          <Button type="submit" disabled={createRun.isPending || !chosen}>
            {createRun.isPending ? 'Starting…' : 'Start run'}
          </Button>
        </form>
      )}
    </Panel>
  );
}

function AddFilesPanel({ workspaceId, artSetId, onRevision }: { workspaceId: string; artSetId: string; onRevision: (n: number) => void }) {
  const [files, setFiles] = useState<File[]>([]);
  const [progress, setProgress] = useState(0);
  const add = useAddArtFiles(workspaceId, artSetId, setProgress);
  const [done, setDone] = useState<string | null>(null);
  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (files.length === 0) return;
    setDone(null);
    add.mutate(files, {
      onSuccess: (artSet) => {
        setDone(`Revision ${artSet.revision} made with ${plural(files.length, 'new or replaced image')}.`);
        setFiles([]);
        (e.target as HTMLFormElement).reset();
        onRevision(artSet.revision);
      },
    });
  };
  return (
    <Panel title="Add or replace images">
      <form onSubmit={submit} className="space-y-4">
        <p className="text-sm text-ink-soft">A file with the same name as one in the art set replaces it; a new name adds a card. Either way a new revision is made.</p>
        <div className="flex flex-col gap-1">
          <label htmlFor="art-files" className="text-sm font-medium">
            Images
          </label>
          <input
            id="art-files"
            type="file"
            multiple
            accept="image/png,image/jpeg,image/webp,image/tiff,.png,.jpg,.jpeg,.webp,.tif,.tiff"
            onChange={(e) => setFiles(Array.from(e.target.files ?? []))}
            className="text-sm file:mr-3 file:rounded-md file:border-0 file:bg-plum file:px-3 file:py-1.5 file:font-semibold file:text-paper"
          />
        </div>
        {add.isPending && <ProgressBar value={Math.round(progress * 100)} max={100} label="Upload progress" />}
        {add.error && (
          <p role="alert" className="rounded-md border border-cut/40 bg-cut/10 px-3 py-2 text-sm text-cut-deep">
            {add.error instanceof ApiError && <span className="font-mono font-semibold">{add.error.code}: </span>}
            {add.error.message}
          </p>
        )}
        {done && (
          <p role="status" className="rounded-md bg-proof-soft px-3 py-2 text-sm text-proof">
            {done}
          </p>
        )}
        <Button type="submit" disabled={files.length === 0 || add.isPending}>
          {add.isPending ? 'Uploading…' : 'Make a new revision'}
        </Button>
      </form>
    </Panel>
  );
}
