// The `bleedwright` command (DESIGN.md "CLI"): the engine without a database.
// Exit codes: 0 every card produced; 1 some cards skipped (the report says why); 2 unusable input
// (bad recipe, unreadable archive, wrong arguments) with one line on stderr; 3 an internal failure.
import { readFile } from 'node:fs/promises';
import { availableParallelism } from 'node:os';
import { Command, CommanderError } from 'commander';
import cliProgress from 'cli-progress';
import sharp from 'sharp';
import { BleedwrightError } from '../shared/errors.ts';
import { exampleRecipe, parseRecipe, type Recipe } from '../shared/recipe.ts';
import { CARDS_IN_FLIGHT, checkArtSet, runEngine, type Progress } from '../jobs/engine/run.ts';
import { formatFindingsTable, formatRunSummary } from './format.ts';

class ExitError extends Error {
  constructor(readonly exitCode: number, message: string) {
    super(message);
  }
}

async function loadRecipe(file: string): Promise<Recipe> {
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch {
    throw new BleedwrightError('RECIPE_INVALID', `recipe: the file "${file}" could not be read`);
  }
  return parseRecipe(text);
}

/** A progress bar on a terminal; nothing at all when stdout is not a TTY (logs, pipes, CI). */
function progressReporter(): { onProgress?: (p: Progress) => void; stop: () => void } {
  if (!process.stdout.isTTY) return { stop: () => {} };
  const bar = new cliProgress.SingleBar(
    { format: '{phase} [{bar}] {value}/{total} {current}', hideCursor: true, clearOnComplete: true },
    cliProgress.Presets.shades_classic,
  );
  let started = false;
  let phase = '';
  return {
    onProgress: (p) => {
      const payload = { phase: p.phase.padEnd(6), current: p.current ?? '' };
      if (!started) {
        bar.start(p.total, p.done, payload);
        started = true;
      } else if (p.phase !== phase) {
        bar.setTotal(p.total);
        bar.update(p.done, payload);
      } else {
        bar.update(p.done, payload);
      }
      phase = p.phase;
    },
    stop: () => {
      if (started) bar.stop();
    },
  };
}

export function buildProgram(): Command {
  const program = new Command();
  program
    .name('bleedwright')
    .description('Turns card art into print-ready singles, a combined PDF, home-print sheets, a proof and a report.')
    .exitOverride()
    .configureOutput({ writeErr: (s) => process.stderr.write(s) });

  program
    .command('run')
    .description('conform every card of an art set (zip or folder) and write all outputs')
    .argument('<source>', 'art set: a .zip file or a folder of card images')
    .requiredOption('--recipe <file>', 'recipe JSON file (see `bleedwright recipe --example`)')
    .requiredOption('--out <dir>', 'output folder')
    .option('--timings', 'also print on stderr how long each step took (start, art set, cards, assembly)')
    .action(async (source: string, opts: { recipe: string; out: string; timings?: boolean }) => {
      const recipe = await loadRecipe(opts.recipe);
      const progress = progressReporter();
      try {
        const engineStart = performance.now();
        const result = await runEngine({ source, recipe, outDir: opts.out, onProgress: progress.onProgress });
        progress.stop();
        process.stdout.write(formatRunSummary(result.report, result.outDir));
        if (opts.timings) {
          // performance.now() counts from the process's start: what came before the engine is start-up.
          const t = result.timings;
          process.stderr.write(`timings: start ${Math.round(engineStart)} ms, art set ${t.openMs} ms, cards ${t.cardsMs} ms, assembly ${t.assemblyMs} ms\n`);
        }
        process.exitCode = result.exitCode;
      } finally {
        progress.stop();
      }
    });

  program
    .command('check')
    .description('preflight an art set and print the findings table; writes no files')
    .argument('<source>', 'art set: a .zip file or a folder of card images')
    .requiredOption('--recipe <file>', 'recipe JSON file')
    .action(async (source: string, opts: { recipe: string }) => {
      const recipe = await loadRecipe(opts.recipe);
      const progress = progressReporter();
      try {
        const result = await checkArtSet({ source, recipe, onProgress: progress.onProgress });
        progress.stop();
        process.stdout.write(formatFindingsTable(result.rows, result.skippedFiles));
        process.exitCode = result.exitCode;
      } finally {
        progress.stop();
      }
    });

  program
    .command('recipe')
    .description('print recipes')
    .option('--example', 'print a complete, valid example recipe')
    .action((opts: { example?: boolean }) => {
      if (!opts.example) throw new ExitError(2, 'USAGE: use `bleedwright recipe --example`');
      process.stdout.write(`${JSON.stringify(exampleRecipe(), null, 2)}\n`);
    });

  return program;
}

export async function main(argv: string[]): Promise<number> {
  // Every image is read and written once: libvips's operation cache would only hold memory. Cards in
  // flight share the cores, so each gets an equal share of libvips threads (1 on a small machine).
  sharp.cache(false);
  sharp.concurrency(Math.max(1, Math.round(availableParallelism() / CARDS_IN_FLIGHT)));
  try {
    await buildProgram().parseAsync(argv, { from: 'user' });
    return typeof process.exitCode === 'number' ? process.exitCode : 0;
  } catch (err) {
    if (err instanceof CommanderError) {
      // Help and version are not errors; commander already printed its message for the rest.
      return err.code === 'commander.helpDisplayed' || err.code === 'commander.version' || err.exitCode === 0 ? 0 : 2;
    }
    if (err instanceof BleedwrightError) {
      process.stderr.write(`${err.toLine()}\n`);
      return 2;
    }
    if (err instanceof ExitError) {
      process.stderr.write(`${err.message}\n`);
      return err.exitCode;
    }
    const message = err instanceof Error ? err.message : String(err);
    process.stderr.write(`INTERNAL: ${message.split('\n')[0]}\n`);
    if (process.env.BLEEDWRIGHT_DEBUG) process.stderr.write(`${(err as Error).stack}\n`);
    return 3;
  }
}

process.exitCode = await main(process.argv.slice(2));
