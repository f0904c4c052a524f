// The README's "API tokens and curl" example, run as written with real curl and jq against a test
// server: only the base URL, token, workspace id and (for speed) the zip are swapped in.
import { execFile, execFileSync } from 'node:child_process';
import { promisify } from 'node:util';
import { mkdtemp, readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { createWorkspaceFixture, type WorkspaceFixture } from './fixtures.ts';
import { cardSet, smallRecipe, startRunsServer, zipOf } from './runs-fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
let stop: () => Promise<void>;

beforeAll(async () => {
  ({ server, stop } = await startRunsServer());
  fx = await createWorkspaceFixture(server.deps.db, server.url);
});
afterAll(() => stop?.());

/** The first ```sh block under the README heading. */
async function readmeBlock(heading: string): Promise<string> {
  const readme = await readFile(path.join(import.meta.dirname, '../../README.md'), 'utf8');
  const section = readme.slice(readme.indexOf(`## ${heading}`));
  const match = /```sh\n([\s\S]*?)```/.exec(section);
  if (!match) throw new Error(`no sh block under "${heading}"`);
  return match[1]!;
}

describe('README curl example', () => {
  it('uploads an art set, starts a run, polls it and downloads the PDF with a token', async () => {
    const api = `/api/workspaces/${fx.workspaceId}`;
    expect((await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe('Curl deck') })).status).toBe(201);
    const token = (await fx.actors.maker.post(`${api}/tokens`, { name: 'README' })).body.secret as string;
    const dir = await mkdtemp(path.join(tmpdir(), 'bw-curl-'));
    const zip = await zipOf(await cardSet(3), dir);
    const block = (await readmeBlock('API tokens and curl'))
      .replace(/^BW=.*$/m, `BW=${server.url}`)
      .replace(/^TOKEN=.*$/m, `TOKEN=${token}`)
      .replace(/^WS=.*$/m, `WS=${fx.workspaceId}`)
      .replace('file=@samples/cinderbrook.zip', `file=@${zip}`);
    await writeFile(path.join(dir, 'example.sh'), block);
    // Asynchronously: the test server answers from this same process.
    const { stdout: out } = await promisify(execFile)('bash', ['example.sh'], { cwd: dir, encoding: 'utf8', timeout: 120_000 });
    expect(out).toMatch(/: done$/m);
    // pdfinfo (poppler-utils) as the outside check: one page per card.
    expect(execFileSync('pdfinfo', [path.join(dir, 'deck.pdf')], { encoding: 'utf8' })).toMatch(/^Pages:\s+3$/m);
  }, 180_000);
});
