// The `bleedwright` CLI prebuilt with esbuild, so a run does not compile TypeScript through tsx
// (that cost ~1-1.4 s of CPU per start). `node scripts/build-cli.mjs` builds it (postinstall does,
// never failing the install); bin/bleedwright.js calls `cliEntry()` on every start.
//
// dist-cli/ (git-ignored) holds content-hashed ES modules and their source maps, and manifest.json:
// the entry file, the sources the build read (esbuild's metafile, a bundled package by its
// package.json, plus the build settings), and
// `builtAt`, the file system's clock when the build began. The bundle is fresh while no source has an
// mtime at or after `builtAt`, so an edit saved during a build is caught by the next start.
// Code splitting keeps the sheets and proof writers in chunks of their own: they alone load pdf-lib
// (~0.35 s of CPU), and only when a recipe asks for them.
import { existsSync, mkdirSync, readdirSync, readFileSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { basename, dirname, join, relative } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const root = fileURLToPath(new URL('..', import.meta.url));
const dist = join(root, 'dist-cli');
const manifestFile = join(dist, 'manifest.json');
// Read by the build beside the sources it imports: a change to either means a new build.
// package-lock.json changes whenever a bundled package is added, removed or upgraded.
const SETTINGS = ['scripts/build-cli.mjs', 'tsconfig.json', 'package-lock.json'];
// A file another manifest still names may be loaded late by a CLI started before a rebuild (the
// sheets and proof chunks load at the end of a run), so unreferenced files are removed only when old.
const PRUNE_AFTER_MS = 60 * 60 * 1000;

function readManifest() {
  try {
    return JSON.parse(readFileSync(manifestFile, 'utf8'));
  } catch {
    return null;
  }
}

/** The entry module's path when the bundle exists and no source it was built from changed since. */
export function freshEntry() {
  const manifest = readManifest();
  if (!manifest) return null;
  try {
    for (const file of manifest.inputs) if (statSync(join(root, file)).mtimeMs >= manifest.builtAt) return null;
    const entry = join(dist, manifest.entry);
    statSync(entry);
    return entry;
  } catch {
    return null; // a source or the entry is gone
  }
}

const tempName = (name) => join(dist, `.${name}.${process.pid}.${Math.random().toString(36).slice(2)}.tmp`);

/** Writes a file under its final name in one step (temp file + rename), so a reader never sees half. */
function writeAtomically(file, contents) {
  const temp = tempName(basename(file));
  try {
    writeFileSync(temp, contents);
    renameSync(temp, file);
  } catch (err) {
    rmSync(temp, { force: true });
    throw err;
  }
}

// zod's `z` namespace re-exports every message locale (~290 KB of the bundle's ~1 MB, compiled at every
// start); the CLI's messages are English, so its locale index is cut down to English alone.
const zodEnglishOnly = {
  name: 'zod-english-only',
  setup(b) {
    b.onResolve({ filter: /^\.\.\/locales\/index\.js$/ }, (args) =>
      /[\\/]node_modules[\\/]zod[\\/]/.test(args.importer) ? { path: join(dirname(args.importer), '..', 'locales', 'english-only.js'), namespace: 'zod-locales' } : undefined,
    );
    b.onLoad({ filter: /.*/, namespace: 'zod-locales' }, (args) => ({ contents: "export { default as en } from './en.js';", resolveDir: dirname(args.path), loader: 'js' }));
  },
};

/** Builds the bundle and returns its entry module's path. Several builds at once are safe. */
export async function buildCli() {
  const { build } = await import('esbuild');
  mkdirSync(dist, { recursive: true });
  // The build's start on the same clock as the sources' mtimes: a file written now, then its mtime.
  const clock = tempName('clock');
  writeFileSync(clock, '');
  const builtAt = statSync(clock).mtimeMs;
  rmSync(clock);

  const result = await build({
    absWorkingDir: root,
    entryPoints: { bleedwright: 'cli/main.ts' },
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    // Packages are bundled too (resolving and compiling zod's, unzipper's and sharp's hundreds of files
    // cost ~0.15 s per start). sharp's native addon is still required from node_modules at run time
    // (its path is computed, so it stays a require); unzipper's optional S3 client is left out.
    external: ['@aws-sdk/*'],
    plugins: [zodEnglishOnly],
    // Bundled CommonJS packages call require() for Node's own modules.
    banner: { js: "import { createRequire as __bwCreateRequire } from 'node:module'; const require = __bwCreateRequire(import.meta.url);" },
    splitting: true,
    outdir: dist,
    entryNames: '[name]-[hash]',
    chunkNames: 'chunk-[hash]',
    outExtension: { '.js': '.mjs' },
    // Less to read and compile at every start; names are kept for stack traces.
    minifyWhitespace: true,
    minifySyntax: true,
    sourcemap: 'linked',
    sourcesContent: false,
    metafile: true,
    write: false,
    logLevel: 'silent',
  });
  // Names carry a hash of their contents, so a file already there under the same name is the same.
  const outputs = result.outputFiles.map((f) => basename(f.path));
  for (const f of result.outputFiles) writeAtomically(f.path, f.contents);
  const entryOutput = Object.entries(result.metafile.outputs).find(([, o]) => o.entryPoint === 'cli/main.ts');
  const entry = basename(entryOutput[0]);
  // A bundled package is checked by its package.json (npm writes a package's folder whole), not by
  // each of its hundreds of files.
  const packageOf = (file) => file.match(/^(.*node_modules\/(?:@[^/]+\/)?[^/]+)\//)?.[1];
  // Inputs of a plugin's own namespace ("zod-locales:...") are not files; the plugin is in SETTINGS.
  const files = Object.keys(result.metafile.inputs).filter((f) => !/^[a-z-]+:/.test(f));
  const inputs = [...new Set(files.map((f) => (packageOf(f) ? `${packageOf(f)}/package.json` : f))), ...SETTINGS.filter((f) => existsSync(join(root, f)))];

  const previous = readManifest();
  writeAtomically(manifestFile, `${JSON.stringify({ entry, builtAt, inputs, outputs }, null, 2)}\n`);
  prune(new Set([...outputs, ...(previous?.outputs ?? []), 'manifest.json']));
  return join(dist, entry);
}

function prune(keep) {
  const now = Date.now();
  for (const name of readdirSync(dist)) {
    if (keep.has(name)) continue;
    const file = join(dist, name);
    try {
      if (now - statSync(file).mtimeMs > PRUNE_AFTER_MS) rmSync(file, { force: true });
    } catch {
      // removed by another build meanwhile
    }
  }
}

/** The bundle's entry, rebuilt when stale; null when it cannot be built (the caller falls back to tsx). */
export async function cliEntry() {
  const entry = freshEntry();
  if (entry) return entry;
  try {
    return await buildCli();
  } catch (err) {
    if (process.env.BLEEDWRIGHT_DEBUG) process.stderr.write(`bleedwright: CLI bundle not built, using tsx: ${err?.stack ?? err}\n`);
    return null;
  }
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  // postinstall: a failed build must not fail the install; the CLI then builds or uses tsx at start.
  try {
    const entry = await buildCli();
    process.stdout.write(`bleedwright: CLI built (${relative(root, entry)})\n`);
  } catch (err) {
    process.stderr.write(`bleedwright: CLI bundle not built (the CLI will use tsx): ${err?.message ?? err}\n`);
  }
}
