// README "Limits and safety" states the limits a card maker meets; this keeps every row equal to the
// value the code really uses (issue 6: "the README's limits match the code").
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { DEFAULT_ARCHIVE_LIMITS } from '../../jobs/engine/archive.ts';
import { runsConfigFromEnv } from '../../jobs/runs/runtime.ts';
import { SIGN_IN_LIMITS, type LimitRule } from '../../server/services/sign-in-limits.ts';
import { createShareBodySchema } from '../../shared/api/runs.ts';
import { PREFLIGHT_CONFIG } from '../../shared/findings.ts';
import { FULL_LOAD, PEAK_RSS_BOUND_MB } from '../load/config.ts';
import { MAX_COPIES, MAX_DPI, MAX_TRIM_MM, MIN_DPI, parseRecipe } from '../../shared/recipe.ts';

const readme = readFileSync('README.md', 'utf8');
const section = readme.slice(readme.indexOf('## Limits and safety'), readme.indexOf('\n## ', readme.indexOf('## Limits and safety') + 5));

/** The value cell of the table row whose first cell is `label`. */
function row(label: string): string {
  const line = section.split('\n').find((l) => l.startsWith(`| ${label} |`));
  if (!line) throw new Error(`README "Limits and safety" has no row "${label}"`);
  return line.split('|')[2]!.trim();
}
const MB = 1024 * 1024;

describe('README limits match the code', () => {
  it('archive and upload limits', () => {
    expect(row('upload size')).toBe(`${runsConfigFromEnv({}).uploadMaxBytes / MB} MB (\`BLEEDWRIGHT_UPLOAD_MAX_MB\`)`);
    expect(row('entries in one zip')).toBe(String(DEFAULT_ARCHIVE_LIMITS.maxEntries));
    expect(row('one file, unpacked')).toBe(`${DEFAULT_ARCHIVE_LIMITS.maxEntryBytes / MB} MB`);
    expect(row('whole zip, unpacked')).toBe(`${DEFAULT_ARCHIVE_LIMITS.maxTotalBytes / MB} MB`);
    expect(row('unpacked : packed ratio')).toBe(`${DEFAULT_ARCHIVE_LIMITS.maxRatio} : 1 (files over ${DEFAULT_ARCHIVE_LIMITS.ratioFloorBytes / MB} MB)`);
  });

  it('image, recipe and manifest limits', () => {
    expect(row('pixels in one image')).toBe(`${PREFLIGHT_CONFIG.maxInputPixels / 1e6} megapixels`);
    expect(row('copies of one card')).toBe(`0 to ${MAX_COPIES}`);
    expect(row('resolution')).toBe(`${MIN_DPI} to ${MAX_DPI} DPI`);
    expect(row('trim')).toBe(`up to ${MAX_TRIM_MM} mm a side, more than 0`);
    const multiple = /^1 to (\d+)$/.exec(row('sheet multiple'))![1]!;
    expect(() => parseRecipe({ name: 'x', sheet: { multiple: Number(multiple), pad: 'blank' } })).not.toThrow();
    expect(() => parseRecipe({ name: 'x', sheet: { multiple: Number(multiple) + 1, pad: 'blank' } })).toThrow();
  });

  it('request, sign-in and share-link limits', () => {
    const json = /^(\d+) KB$/.exec(row('JSON request body'))![1]!;
    expect(readFileSync('server/app.ts', 'utf8')).toContain(`express.json({ limit: '${json}kb' })`);
    const minutes = (ms: number) => `${ms / 60_000} minute${ms === 60_000 ? '' : 's'}`;
    const rule = (r: LimitRule) => `${r.maxFailures} in ${minutes(r.windowMs)}, then locked ${minutes(r.lockMs)}, doubling with each lock-out up to ${minutes(r.maxLockMs)}`;
    expect(row('failed sign-ins, one address from one IP')).toBe(rule(SIGN_IN_LIMITS.addressAndIp));
    expect(row('failed sign-ins from one IP, any addresses')).toBe(rule(SIGN_IN_LIMITS.ip));
    expect(section).toContain('`BLEEDWRIGHT_TRUST_PROXY=1` (off by default)');
    expect(readFileSync('server/main.ts', 'utf8')).toContain("trustProxy: process.env.BLEEDWRIGHT_TRUST_PROXY === '1'");
    const hours = /^1 to (\d+) hours$/.exec(row('share links'))![1]!;
    expect(createShareBodySchema.safeParse({ expiresInHours: Number(hours) }).success).toBe(true);
    expect(createShareBodySchema.safeParse({ expiresInHours: Number(hours) + 1 }).success).toBe(false);
  });

  it('load figures: the size npm test runs, and a measured peak under the bound the test holds', () => {
    const load = section.slice(section.indexOf('**Load**'));
    const zipMiB = Number(/(\d+) uploads of ([\d.]+) MiB zips/.exec(load)?.[2]);
    expect(load).toMatch(new RegExp(`\\b${FULL_LOAD.uploads} uploads of [\\d.]+ MiB zips`));
    expect(zipMiB).toBeGreaterThanOrEqual(FULL_LOAD.zipMegabytes);
    expect(load).toContain(`${FULL_LOAD.runs} runs started at once (${FULL_LOAD.cardsPerZip} cards each at ${FULL_LOAD.dpi} DPI)`);
    expect(load).toContain(`fails at ${PEAK_RSS_BOUND_MB} MB or more`);
    const peak = Number(/peaked at (\d+) MB/.exec(load)?.[1]);
    expect(peak).toBeGreaterThan(0);
    expect(peak).toBeLessThan(PEAK_RSS_BOUND_MB);
    expect(load).toContain('`npm test`');
  });
});
