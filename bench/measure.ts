// Runs one command and measures it: wall time, CPU time of the whole process tree (GNU time, which
// waits for every descendant), and peak memory, sampled as the summed RSS of the process and all its
// descendants (B runs two ImageMagick processes at once; their sum is what the machine must hold).
import { spawn } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';

export const GNU_TIME = '/usr/bin/time';
const PAGE_BYTES = 4096;
const SAMPLE_MS = 50;

export type Measured = {
  status: number | null;
  wallMs: number;
  /** User + system CPU of the command and every descendant it waited for. */
  cpuMs: number;
  /** Highest summed RSS of the process tree seen while sampling. */
  peakTreeRssBytes: number;
  /** Largest single process's peak RSS (kernel high-water mark, from GNU time). */
  peakProcessRssBytes: number;
  stdout: string;
  stderr: string;
};

/** The fields of /proc/<pid>/stat after the command name (proc(5)): [0] is the state, field 3. */
function statFields(pid: number): string[] {
  const stat = readFileSync(`/proc/${pid}/stat`, 'latin1');
  // The command name may hold spaces and parentheses: the fields start after the last ')'.
  return stat.slice(stat.lastIndexOf(')') + 2).split(' ');
}

/** Resident bytes of one process, or 0 when it has ended. */
function rssOf(pid: number): number {
  try {
    return Number(statFields(pid)[21]) * PAGE_BYTES;
  } catch {
    return 0; // the process ended between two reads
  }
}

/**
 * Children of `pid` started by its main thread (proc(5), Linux 3.5+). Every command measured here
 * (GNU time, bash, xargs, node) starts its children from the main thread; reading each thread's list
 * instead costs ~1 ms more per sample for a node process with its dozen threads.
 */
function childrenOf(pid: number): number[] {
  try {
    return readFileSync(`/proc/${pid}/task/${pid}/children`, 'latin1').split(' ').filter(Boolean).map(Number);
  } catch {
    return []; // the process ended
  }
}

/**
 * Summed RSS of `rootPid` and its descendants. Walks down from the root (a few small reads) instead of
 * reading every process on the machine: at one sample every 50 ms, reading all of /proc took ~4.6 ms of
 * CPU each time (measured here), about 5% of a 2-core machine taken from the command being measured.
 */
export function treeRss(rootPid: number): number {
  let sum = 0;
  const stack = [rootPid];
  while (stack.length) {
    const pid = stack.pop()!;
    sum += rssOf(pid);
    stack.push(...childrenOf(pid));
  }
  return sum;
}

export async function measure(cmd: string, args: readonly string[], opts: { cwd?: string; env?: NodeJS.ProcessEnv } = {}): Promise<Measured> {
  const dir = await mkdtemp(path.join(tmpdir(), 'bw-bench-'));
  const timeFile = path.join(dir, 'time.txt');
  try {
    const started = performance.now();
    const child = spawn(GNU_TIME, ['-f', '%e %U %S %M', '-o', timeFile, cmd, ...args], { cwd: opts.cwd, env: opts.env ?? process.env, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d: Buffer) => (stdout += d.toString()));
    child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
    let peak = 0;
    const timer = setInterval(() => {
      if (child.pid) peak = Math.max(peak, treeRss(child.pid));
    }, SAMPLE_MS);
    const status = await new Promise<number | null>((resolve, reject) => {
      child.on('error', reject);
      child.on('close', (code) => resolve(code));
    });
    const wallMs = performance.now() - started;
    clearInterval(timer);
    const [, user, sys, maxKb] = (await readFile(timeFile, 'utf8')).trim().split('\n').pop()!.split(' ').map(Number);
    return {
      status,
      wallMs,
      cpuMs: Math.round((user! + sys!) * 1000),
      peakTreeRssBytes: Math.max(peak, maxKb! * 1024),
      peakProcessRssBytes: maxKb! * 1024,
      stdout,
      stderr,
    };
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}

/** Samples the summed RSS of `pid` and its descendants until stop(), which returns the peak. */
export function sampleTreeRss(pid: number): { stop: () => number } {
  let peak = treeRss(pid);
  const timer = setInterval(() => {
    peak = Math.max(peak, treeRss(pid));
  }, SAMPLE_MS);
  return {
    stop: () => {
      clearInterval(timer);
      return Math.max(peak, treeRss(pid));
    },
  };
}

/** User + system CPU time a running process has used so far (clock ticks of 1/100 s on Linux). */
export function processCpuMs(pid: number): number {
  const fields = statFields(pid);
  return (Number(fields[11]) + Number(fields[12])) * 10;
}
