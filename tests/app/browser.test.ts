// The whole invite loop in real Chromium against the real server and built client:
// demo owner signs in, invites a helper, opens the captured mail, the helper accepts and sees the workspace.
import { mkdirSync } from 'node:fs';
import { resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { chromium, type Browser } from 'playwright-core';
import type { RunningServer } from '../../server/server.ts';
import { DEMO_ACCOUNTS, DEMO_WORKSPACE } from '../../server/seed.ts';
import { startTestServer, uniqueEmail } from './fixtures.ts';

const SCREENSHOTS = resolve('.data/screenshots');

let server: RunningServer;
let browser: Browser;
const created: string[] = [];

beforeAll(async () => {
  server = await startTestServer({ clientDir: resolve('dist'), seed: true });
  browser = await chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run'],
  });
  mkdirSync(SCREENSHOTS, { recursive: true });
});
afterAll(async () => {
  // The demo workspace is shared by runs of this test: leave it as the seed made it.
  if (created.length) await server.deps.db('users').whereIn('email', created).delete();
  await browser?.close();
  await server?.close();
});

describe('browser: invite a helper', () => {
  it('owner invites, the mail arrives, the helper accepts and sees the workspace as helper', async () => {
    const owner = DEMO_ACCOUNTS.find((a) => a.role === 'owner')!;
    const helperEmail = uniqueEmail('helper');
    created.push(helperEmail);
    const requested: string[] = [];

    const ownerContext = await browser.newContext();
    const page = await ownerContext.newPage();
    page.on('request', (r) => requested.push(r.url()));
    await page.goto(server.url);
    await page.waitForURL(/\/sign-in/);
    await page.getByLabel('E-mail').fill(owner.email);
    await page.getByLabel('Password').fill(owner.password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByRole('heading', { name: DEMO_WORKSPACE.name, exact: true }).waitFor();

    await page.getByRole('link', { name: 'Members' }).click();
    await page.getByLabel('E-mail address').fill(helperEmail);
    await page.getByLabel('Role', { exact: true }).selectOption('helper');
    await page.getByRole('button', { name: 'Send invitation' }).click();
    await page.getByRole('status').filter({ hasText: helperEmail }).waitFor();
    await page.getByText(helperEmail).first().waitFor();

    await page.getByRole('link', { name: 'Captured mail' }).click();
    const message = page.locator('li', { hasText: helperEmail });
    const acceptLink = message.getByRole('link', { name: /\/invite\// });
    await acceptLink.waitFor();
    const href = (await acceptLink.getAttribute('href'))!;
    expect(href.startsWith(`${server.url}/invite/`)).toBe(true);
    await page.screenshot({ path: `${SCREENSHOTS}/captured-mail.png`, fullPage: true });

    // The helper opens the link in a browser of their own.
    const helperContext = await browser.newContext();
    const helperPage = await helperContext.newPage();
    helperPage.on('request', (r) => requested.push(r.url()));
    await helperPage.goto(href);
    await helperPage.getByRole('heading', { name: `Join ${DEMO_WORKSPACE.name}` }).waitFor();
    await helperPage.getByLabel('Your name').fill('Invited Helper');
    await helperPage.getByLabel('Choose a password').fill('helper-password-123');
    await helperPage.getByRole('button', { name: 'Create account and join' }).click();
    await helperPage.getByRole('heading', { name: DEMO_WORKSPACE.name, exact: true }).waitFor();

    const nav = helperPage.getByRole('navigation', { name: 'Workspace' });
    await expect(nav.getByRole('link', { name: 'Runs' }).isVisible()).resolves.toBe(true);
    expect(await nav.getByRole('link', { name: 'Members' }).count()).toBe(0);
    expect(await nav.getByRole('link', { name: 'Captured mail' }).count()).toBe(0);
    expect(await helperPage.locator('aside').getByText('helper', { exact: true }).count()).toBeGreaterThan(0);
    expect(await helperPage.getByText('You can see runs and download finished bundles.').isVisible()).toBe(true);
    await helperPage.screenshot({ path: `${SCREENSHOTS}/helper-home.png`, fullPage: true });

    // Everything came from the app's own origin: no font CDN, no outside requests.
    expect(requested.filter((u) => !u.startsWith(server.url))).toEqual([]);
    expect(requested.some((u) => /\.woff2$/.test(u))).toBe(true);
    await ownerContext.close();
    await helperContext.close();
  });
});
