// glibc malloc settings for the processes that render cards: the CLI, `npm start` and `npm run worker`.
// Each card passes several MB of pixel buffers through malloc (the art, its decoded pixels, libvips's
// working memory, the PNG). By default glibc serves blocks that large with mmap, or trims its heaps
// once they are freed, so every card takes fresh zeroed pages from the kernel again. Served from the
// heap and never trimmed, the same memory is reused card after card: on the bench VM, ~0.9 s less
// system CPU per 200 cards and ~5% off a run's wall time, for ~25 MB more resident memory.
// glibc reads these once, at process start, so they are set where each process is started: the CLI's
// shebang (bin/bleedwright.js), package.json's start and worker scripts, and the bench's worker. Keep
// the four in step (tests/engine/cli.test.ts checks they are).
export const MALLOC_ENV = Object.freeze({ MALLOC_MMAP_THRESHOLD_: '67108864', MALLOC_TRIM_THRESHOLD_: '1073741824' });

/** The settings as shell assignments: `MALLOC_MMAP_THRESHOLD_=... MALLOC_TRIM_THRESHOLD_=...`. */
export function mallocAssignments() {
  return Object.entries(MALLOC_ENV)
    .map(([k, v]) => `${k}=${v}`)
    .join(' ');
}
