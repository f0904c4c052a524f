// Runs one command and measures it: wall time, CPU time of the whole process tree (GNU time, which
// waits for every descendant), and peak memory, sampled as the summed RSS of the process and all its
// descendants (B runs two ImageMagick processes at once; their sum is what the machine must hold).
import { spawn } from 'node:child_process';
import { readdirSync, readFileSync } from 'node:fs';
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

/** pid -> [ppid, rss bytes] for every process now; processes that vanish mid-read are skipped. */
function processTable(): Map<number, [number, number]> {
  const table = new Map<number, [number, number]>();
  for (const name of readdirSync('/proc')) {
    if (!/^\d+$/.test(name)) continue;
    try {
      const stat = readFileSync(`/proc/${name}/stat`, 'latin1');
      // Fields after the command name (which may hold spaces) start after the last ')'.
      const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
      table.set(Number(name), [Number(fields[1]), Number(fields[21]) * PAGE_BYTES]);
    } catch {
      // the process ended between readdir and read
    }
  }
  return table;
}

export function treeRss(rootPid: number): number {
  const table = processTable();
  const children = new Map<number, number[]>();
  for (const [pid, [ppid]] of table) children.set(ppid, [...(children.get(ppid) ?? []), pid]);
  let sum = 0;
  const stack = [rootPid];
  while (stack.length) {
    const pid = stack.pop()!;
    sum += table.get(pid)?.[1] ?? 0;
    stack.push(...(children.get(pid) ?? []));
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
  const stat = readFileSync(`/proc/${pid}/stat`, 'latin1');
  const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
  return (Number(fields[11]) + Number(fields[12])) * 10;
}
