// Bounded concurrency over a list, for I/O-heavy steps (renders, cache lookups, storage checks, links).

/** `fn` over `items`, at most `limit` at a time; results in the order of `items`. */
export async function mapLimited<T, R>(items: readonly T[], limit: number, fn: (item: T, index: number) => Promise<R>): Promise<R[]> {
  const results = new Array<R>(items.length);
  let next = 0;
  const worker = async () => {
    while (next < items.length) {
      const i = next++;
      results[i] = await fn(items[i]!, i);
    }
  };
  await Promise.all(Array.from({ length: Math.min(limit, items.length) }, worker));
  return results;
}

/**
 * A queue that runs at most `limit` tasks at once, in the order they are given: `run(task)` settles as
 * the task does. For tasks that join one by one from several places (mapLimited takes a whole list).
 */
export function limiter(limit: number): <R>(task: () => Promise<R>) => Promise<R> {
  let active = 0;
  const waiting: Array<() => void> = [];
  return async <R>(task: () => Promise<R>): Promise<R> => {
    // A waiter is handed the slot of the task that finished: `active` stays as it is.
    if (active >= limit) await new Promise<void>((resolve) => waiting.push(resolve));
    else active++;
    try {
      return await task();
    } finally {
      const next = waiting.shift();
      if (next) next();
      else active--;
    }
  };
}
