// The API tokens page in real Chromium against the built client: a maker makes a token, sees it once,
// uses it from a script, finds it listed (never shown again) and revokes it.
import { mkdirSync } from 'node:fs';
import { resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { chromium, type Browser } from 'playwright-core';
import type { RunningServer } from '../../server/server.ts';
import { TEST_PASSWORD, createWorkspaceFixture, startTestServer, type WorkspaceFixture } from './fixtures.ts';

const SCREENSHOTS = resolve('.data/screenshots');
let server: RunningServer;
let browser: Browser;
let fx: WorkspaceFixture;

beforeAll(async () => {
  server = await startTestServer({ clientDir: resolve('dist') });
  fx = await createWorkspaceFixture(server.deps.db, server.url);
  browser = await chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run'],
  });
  mkdirSync(SCREENSHOTS, { recursive: true });
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
});

const runsWith = (token: string) => fetch(`${server.url}/api/workspaces/${fx.workspaceId}/runs`, { headers: { Authorization: `Bearer ${token}` } }).then((r) => r.status);

describe('browser: API tokens page', () => {
  it('makes a token shown once, lists it without the secret, and revokes it', async () => {
    const context = await browser.newContext();
    const page = await context.newPage();
    await page.goto(`${server.url}/sign-in`);
    await page.getByLabel('E-mail').fill(fx.users.maker.email);
    await page.getByLabel('Password').fill(TEST_PASSWORD);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL(/\/w\//);
    await page.goto(`${server.url}/w/${fx.workspaceId}/tokens`);
    await page.getByRole('heading', { name: 'API tokens' }).waitFor();

    await page.getByLabel('Name').fill('Nightly build');
    await page.getByRole('button', { name: 'Make token' }).click();
    const secret = (await page.getByTestId('new-token').textContent())!.trim();
    expect(secret).toMatch(/^bw_[A-Za-z0-9_-]{43}$/);
    await page.screenshot({ path: `${SCREENSHOTS}/tokens-created.png`, fullPage: true });
    expect(await runsWith(secret)).toBe(200);

    await page.reload();
    const row = page.locator('tr', { hasText: 'Nightly build' });
    await row.waitFor();
    await expect(row.textContent()).resolves.toContain(`${secret.slice(0, 9)}…`);
    expect(await page.content()).not.toContain(secret);

    await row.getByRole('button', { name: 'Revoke' }).click();
    await row.getByText('revoked').waitFor();
    expect(await runsWith(secret)).toBe(401);
    await context.close();
  }, 120_000);
});
