import { useRef, useState, type DragEvent, type FormEvent } from 'react';
import { Link, useParams } from 'react-router-dom';
import { Button, ErrorNote, Loading, PageHeader, Panel } from '../../../components/ui';
import { InputField } from '../../../components/fields';
import { ProgressBar } from '../../../components/status';
import { formatBytes, formatDateTime } from '../../../components/format';
import { ApiError } from '../../../lib/api';
import { useWorkspace } from '../../workspaces/api/get-workspace';
import { useCanWrite } from '../../runs/components/use-can-write';
import { useArtSets } from '../api/get-art-sets';
import { useUploadArtSet } from '../api/upload-art-set';

export function ArtSetsPage() {
  const { workspaceId = '' } = useParams();
  const workspace = useWorkspace(workspaceId);
  const canWrite = useCanWrite(workspaceId);
  const artSets = useArtSets(workspaceId);
  return (
    <>
      <PageHeader eyebrow={workspace.data?.name} title="Art sets" />
      <div className="grid items-start gap-8 xl:grid-cols-[1fr_24rem]">
        <Panel title="Uploaded art sets">
          {artSets.isPending ? (
            <Loading what="art sets" />
          ) : artSets.error ? (
            <ErrorNote error={artSets.error} />
          ) : artSets.data.length === 0 ? (
            <p className="text-sm text-ink-soft">No art sets yet.{canWrite && ' Upload a zip of card images to start.'}</p>
          ) : (
            <table className="w-full text-left text-sm">
              <thead className="text-ink-soft">
                <tr>
                  <th className="pb-2 font-medium">Name</th>
                  <th className="pb-2 font-medium">Revision</th>
                  <th className="pb-2 font-medium">Cards</th>
                  <th className="pb-2 font-medium">Files</th>
                  <th className="pb-2 font-medium">Updated</th>
                </tr>
              </thead>
              <tbody>
                {artSets.data.map((a) => (
                  <tr key={a.id} className="border-t border-line/70">
                    <td className="py-3">
                      <Link to={a.id} className="font-semibold underline-offset-4 hover:text-cut hover:underline">
                        {a.name}
                      </Link>
                    </td>
                    <td className="py-3 font-mono text-xs">r{a.revision}</td>
                    <td className="py-3">{a.cardCount}</td>
                    <td className="py-3">{a.entryCount}</td>
                    <td className="py-3 text-ink-soft">{formatDateTime(a.updatedAt)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          )}
        </Panel>
        {canWrite && <UploadPanel workspaceId={workspaceId} />}
      </div>
    </>
  );
}

function UploadPanel({ workspaceId }: { workspaceId: string }) {
  const [file, setFile] = useState<File | null>(null);
  const [name, setName] = useState('');
  const [progress, setProgress] = useState(0);
  const [dragging, setDragging] = useState(false);
  const input = useRef<HTMLInputElement>(null);
  const upload = useUploadArtSet(workspaceId, setProgress);

  const choose = (f: File | null) => {
    setFile(f);
    upload.reset();
    setProgress(0);
  };
  const onDrop = (e: DragEvent) => {
    e.preventDefault();
    setDragging(false);
    const dropped = e.dataTransfer.files[0];
    if (!dropped) return;
    // Show the dropped file in the file input too, so the page tells one story.
    if (input.current) input.current.files = e.dataTransfer.files;
    choose(dropped);
  };
  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (!file) return;
    setProgress(0);
    upload.mutate({ file, name }, { onSuccess: () => { if (input.current) input.current.value = ''; } });
  };

  const error = upload.error;
  return (
    <Panel title="Upload a zip">
      <form onSubmit={submit} className="space-y-4">
        <div
          onDragOver={(e) => {
            e.preventDefault();
            setDragging(true);
          }}
          onDragLeave={() => setDragging(false)}
          onDrop={onDrop}
          data-testid="drop-zone"
          className={`rounded-md border-2 border-dashed px-4 py-6 text-center text-sm transition-colors ${dragging ? 'border-cut bg-cut/5' : 'border-line bg-white'}`}
        >
          <p className="font-medium">Drop a .zip here</p>
          <p className="mt-1 text-ink-soft">or choose one:</p>
          <label htmlFor="art-zip" className="sr-only">
            Zip file
          </label>
          <input
            id="art-zip"
            ref={input}
            type="file"
            accept=".zip,application/zip"
            onChange={(e) => choose(e.target.files?.[0] ?? null)}
            className="mt-2 block w-full text-sm file:mr-3 file:rounded-md file:border-0 file:bg-plum file:px-3 file:py-1.5 file:font-semibold file:text-paper"
          />
          {file && (
            <p className="mt-2 font-mono text-xs text-ink-soft">
              {file.name} · {formatBytes(file.size)}
            </p>
          )}
        </div>
        <InputField label="Name (optional)" placeholder="from the zip's name" value={name} onChange={(e) => setName(e.target.value)} maxLength={120} />
        {upload.isPending && <ProgressBar value={Math.round(progress * 100)} max={100} label="Upload progress" />}
        {error && (
          <p role="alert" className="rounded-md border border-cut/40 bg-cut/10 px-3 py-2 text-sm text-cut-deep">
            {error instanceof ApiError ? (
              <>
                <span className="font-mono font-semibold">{error.code}</span>: {error.message}
              </>
            ) : (
              error.message
            )}
          </p>
        )}
        {upload.data && (
          <p role="status" className="rounded-md bg-proof-soft px-3 py-2 text-sm text-proof">
            {upload.data.deduplicated ? 'This zip was already uploaded: ' : 'Uploaded: '}
            <Link to={upload.data.artSet.id} className="font-semibold underline underline-offset-4">
              {upload.data.artSet.name} (revision {upload.data.artSet.revision})
            </Link>
            {upload.data.deduplicated ? ', nothing was stored twice.' : '.'}
          </p>
        )}
        <Button type="submit" disabled={!file || upload.isPending}>
          {upload.isPending ? `Uploading… ${Math.round(progress * 100)}%` : 'Upload'}
        </Button>
      </form>
    </Panel>
  );
}
