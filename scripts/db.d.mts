export function findPgBin(): string | null;
export function ensureDatabase(opts: { dataDir: string; port: number; database: string; log?: (m: string) => void }): Promise<string>;
export function stopDatabase(opts: { dataDir: string; mode?: 'smart' | 'fast' | 'immediate' }): void;
