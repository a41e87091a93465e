import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { eq } from 'drizzle-orm';
import { labs, runs, users } from '../../drizzle/schema.js';
import { RETENTION_RULE } from '../../shared/api/admin.js';
import { runSpecSchema } from '../../shared/run-spec.js';
import { DEMO_LAB, DEMO_OTHER_LAB, DEMO_SIGN_INS, seedDemo } from '../../api/src/seed/demo.js';
import { sweepRetention } from '../../api/src/services/admin-retention.js';
import { launchBrowser, newPage, screenshot, signIn } from './browser.js';
import http, { type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { createApp } from '../../api/src/app.js';
import type { AppDeps } from '../../api/src/deps.js';
import { createFarmHealth, type FarmHealth } from '../../api/src/queue/farm-health.js';
import { DIST_DIR, startStack, type Stack } from './stack.js';

/** Right-aligned cells of a table (numbers with their units) whose text runs over more than one line. */
async function linesOfNumbers(page: Page, table: string): Promise<string[]> {
  return page.getByRole('table', { name: table }).locator('td.text-right').evaluateAll((cells) =>
    cells.flatMap((td) => {
      const range = document.createRange();
      range.selectNodeContents(td);
      const tops = new Set([...range.getClientRects()].filter((r) => r.width > 0).map((r) => Math.round(r.top)));
      return tops.size > 1 ? [td.textContent ?? ''] : [];
    }),
  );
}

/**
 * The admin console's "done when", as a newcomer would do it in headless Chromium on the demo data:
 * sign in as the demo admin, follow the masthead to the console, find the lab over quota, grant it
 * credits with a reason, and see the grant and the new balance in the audit trail and the charts.
 */
describe('the admin console in the browser', () => {
  let stack: Stack;
  let browser: Browser;
  let farm: FarmHealth;
  let server: Server;
  /** the same app and services as the stack, with the farm page reading the stack's own BullMQ prefix */
  let url: string;
  const admin = DEMO_SIGN_INS.find((d) => d.role === 'admin')!;

  beforeAll(async () => {
    stack = await startStack();
    await seedDemo(stack.env, { queuePrefix: stack.queuePrefix });
    farm = createFarmHealth(stack.env.REDIS_URL, { prefix: stack.queuePrefix });
    server = http.createServer(createApp({ ...stack.deps, farm } as AppDeps, { distDir: DIST_DIR }));
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', () => resolve()));
    url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    server?.closeAllConnections();
    await new Promise((r) => server?.close(r));
    await farm?.close();
    await stack?.close();
  });

  test('an admin finds the lab over quota, grants it credits with a reason, and sees grant and balance in the trail and the charts', async () => {
    const page = await newPage(browser, url);
    await signIn(page, admin.email, admin.password);
    await page.getByRole('navigation', { name: 'main' }).getByRole('link', { name: 'Site admin' }).click();
    await page.waitForURL((u) => u.pathname === '/admin');

    // the overview names the lab over quota first thing
    const attention = page.getByRole('list', { name: 'needs attention' });
    const flagged = attention.locator('li', { hasText: DEMO_OTHER_LAB });
    await flagged.getByText('over quota').waitFor();
    await screenshot(page, 'admin-overview');
    await flagged.getByRole('link', { name: DEMO_OTHER_LAB }).click();
    await page.waitForURL((u) => u.searchParams.get('tab') === 'usage');

    // the usage table agrees, the lab's detail opens with its charts
    const table = page.getByRole('table', { name: 'lab usage' });
    const row = table.locator('tbody tr', { hasText: DEMO_OTHER_LAB });
    await row.getByText('over quota').waitFor();
    // sorted by standing, so the lab over quota is the first row
    expect(await table.locator('tbody tr').first().textContent()).toContain(DEMO_OTHER_LAB);
    const detail = page.getByTestId('lab-detail');
    await detail.getByRole('heading', { name: DEMO_OTHER_LAB }).waitFor();
    expect(await detail.getByTestId('lab-available').textContent()).toBe('0 credits');
    const balanceChart = detail.getByTestId('chart-balance');
    await balanceChart.locator('.recharts-line-dot').first().waitFor();
    const dotsBefore = await balanceChart.locator('.recharts-line-dot').count();
    // whole credits on the axes, each label once (a 0–2 balance once read 2, 2, 1, 1, 0)
    const axisLabels = (chart: typeof balanceChart) => chart.locator('.recharts-yAxis-tick-labels .recharts-cartesian-axis-tick-value').allTextContents();
    for (const chart of [balanceChart, detail.getByTestId('chart-credits')]) {
      const labels = await axisLabels(chart);
      expect(labels.length).toBeGreaterThanOrEqual(2);
      expect(labels.every((l) => /^-?\d{1,3}(,\d{3})*$/.test(l))).toBe(true);
      expect(new Set(labels).size).toBe(labels.length);
    }
    await screenshot(page, 'admin-over-quota');

    // the reason is required: the form says so beside the field and books nothing
    const form = page.getByRole('form', { name: 'grant or revoke credits' });
    await form.getByLabel('Credits').fill('1500');
    await form.getByRole('button', { name: 'Grant credits' }).click();
    await form.getByText('give a reason of at least 3 characters').waitFor();
    await form.getByLabel('Reason').fill('pilot extended to the spring term');
    await form.getByRole('button', { name: 'Grant credits' }).click();
    await form.getByText('Granted 1,500 credits').waitFor();

    // the new balance, the standing and the balance chart follow
    await expect.poll(() => detail.getByTestId('lab-available').textContent()).toBe('1,500 credits');
    await row.getByText('within quota').waitFor();
    await expect.poll(() => balanceChart.locator('.recharts-line-dot').count()).toBe(dotsBefore + 1);
    expect(await balanceChart.textContent()).toContain('now 1,500 credits');
    const after = await axisLabels(balanceChart);
    expect(new Set(after).size).toBe(after.length);
    expect(after.at(-1)).toBe('1,500');
    // the month's "granted" bar appears in the credits chart and in the month table
    await detail.getByTestId('chart-credits').locator('.recharts-bar-rectangle path').first().waitFor();
    const month = new Date().toISOString().slice(0, 7);
    const monthRow = page.getByRole('table', { name: 'usage by month' }).locator('tbody tr', { hasText: month });
    expect(await monthRow.locator('td').nth(2).textContent()).toBe('1,500');
    await detail.scrollIntoViewIfNeeded();
    await screenshot(page, 'admin-after-grant');

    // the trail, filtered to the lab and the kind, shows who granted how much and why
    await page.getByRole('navigation', { name: 'admin sections' }).getByRole('link', { name: 'Audit trail' }).click();
    const filters = page.getByRole('form', { name: 'filter the trail' });
    await filters.getByLabel('Lab').selectOption({ label: DEMO_OTHER_LAB });
    await filters.getByLabel('Kind').selectOption('credits.grant');
    const trail = page.getByRole('table', { name: 'audit trail' });
    const grant = trail.locator('tbody tr', { hasText: 'credits.grant' });
    await grant.waitFor();
    await expect.poll(() => trail.locator('tbody tr').count()).toBe(1);
    expect(await grant.textContent()).toContain('Ysolde Marchetti');
    expect(await grant.textContent()).toContain('pilot extended to the spring term');
    expect(await grant.textContent()).toContain('credits: 1,500');
    await screenshot(page, 'admin-audit-trail');

    // the lab-wide trail also holds the allowance cut that put it over quota, with its reason
    await filters.getByLabel('Kind').selectOption('');
    await trail.locator('tbody tr', { hasText: 'lab.allowance' }).getByText('pilot lab: a small free allowance while the farm is busy').waitFor();
  });

  test('the farm page lists the demo runs waiting on the compute queue, and storage shows the retention rule', async () => {
    const page = await newPage(browser, url);
    await signIn(page, admin.email, admin.password, '/admin?tab=farm');
    const queues = page.getByRole('table', { name: 'queues' });
    const compute = queues.locator('tbody tr', { hasText: 'tw-compute' });
    // the seed queues every demo run (api/src/seed/demo.ts) and no worker runs in this test
    await expect.poll(() => compute.locator('td').nth(1).textContent()).toBe('6');
    await page.getByText('No worker is alive').waitFor();
    // what the two counts are, in words: worker processes with a live heartbeat, and BullMQ's
    // registered connections summed over the five queues
    await page.getByText('No worker reporting in; no connection taking jobs from the 5 queues (one per queue a worker serves).').waitFor();
    await screenshot(page, 'admin-farm');
    await page.getByRole('navigation', { name: 'admin sections' }).getByRole('link', { name: 'Storage' }).click();
    await page.getByText('Retention of unpublished runs').waitFor();
    const storageRow = page.getByRole('table', { name: 'storage' }).locator('tbody tr', { hasText: DEMO_OTHER_LAB });
    await storageRow.waitFor();
    // sizes as the figure page writes them (shared/file-size.ts), the exact count on hover
    const stored = storageRow.locator('td').nth(1).locator('span');
    expect(await stored.textContent()).toMatch(/^\d[\d.,]* (bytes?|kB|MB|GB|TB)$/);
    expect(await stored.getAttribute('title')).toMatch(/^[\d,]+ bytes?$/);
    expect(await page.getByRole('table', { name: 'storage' }).textContent()).not.toMatch(/\d{1,3},\d{3} bytes/);
    expect(await linesOfNumbers(page, 'storage')).toEqual([]);
    await screenshot(page, 'tour8b-admin-storage');
    await page.getByRole('navigation', { name: 'admin sections' }).getByRole('link', { name: 'Usage and quotas' }).click();
    await page.getByRole('table', { name: 'lab usage' }).locator('tbody tr').first().waitFor();
    // "0 credits" and the other numbers with units stay on one line
    expect(await linesOfNumbers(page, 'lab usage')).toEqual([]);
    await screenshot(page, 'tour8b-admin-usage');
  });

  test('a lab manager changes a role on the lab page with a reason, the last manager cannot step down, and the admin sees it in the trail', async () => {
    const manager = DEMO_SIGN_INS.find((d) => d.role === 'manager')!;
    const page = await newPage(browser, url);
    await signIn(page, manager.email, manager.password, '/lab');
    const members = page.getByRole('table', { name: 'lab members' });
    await members.waitFor();

    // stepping down as the only manager: the reason is asked for, then the server says why not
    await page.getByRole('combobox', { name: 'permissions of Perrin Ashcombe', exact: true }).selectOption('author');
    const self = page.getByRole('form', { name: 'change the permissions of Perrin Ashcombe' });
    await self.getByRole('button', { name: 'Make author' }).click();
    await self.getByText('give a reason of at least 3 characters').waitFor();
    await self.getByLabel('reason for changing the permissions of Perrin Ashcombe').fill('handing over');
    await self.getByRole('button', { name: 'Make author' }).click();
    await self.getByText('a lab needs at least one manager: make someone else manager first').waitFor();
    await screenshot(page, 'lab-last-manager');
    await page.getByRole('combobox', { name: 'permissions of Perrin Ashcombe', exact: true }).selectOption('manager');

    // promoting the author
    await page.getByRole('combobox', { name: 'permissions of Maren Tollis', exact: true }).selectOption('manager');
    const other = page.getByRole('form', { name: 'change the permissions of Maren Tollis' });
    await other.getByLabel('reason for changing the permissions of Maren Tollis').fill('runs the group while Perrin is on leave');
    await other.getByRole('button', { name: 'Make manager' }).click();
    await expect.poll(() => other.getByRole('button', { name: 'Make manager' }).count()).toBe(0);
    expect(await page.getByRole('combobox', { name: 'permissions of Maren Tollis', exact: true }).inputValue()).toBe('manager');
    await screenshot(page, 'lab-role-changed');

    const adminPage = await newPage(browser, url);
    await signIn(adminPage, admin.email, admin.password, '/admin?tab=audit');
    const filters = adminPage.getByRole('form', { name: 'filter the trail' });
    await filters.getByLabel('Kind').selectOption('member.role');
    const row = adminPage.getByRole('table', { name: 'audit trail' }).locator('tbody tr', { hasText: 'member.role' });
    await row.waitFor();
    expect(await row.textContent()).toContain('Perrin Ashcombe');
    expect(await row.textContent()).toContain('Maren Tollis');
    expect(await row.textContent()).toContain('runs the group while Perrin is on leave');
    // jsonb keeps keys in its own order, so each part separately
    expect(await row.textContent()).toContain('from: author');
    expect(await row.textContent()).toContain('to: manager');
    await screenshot(adminPage, 'admin-audit-role-change');
  });

  test('an unpublished run past its storage period is mailed about, then shows "expired — artifacts removed" instead of a viewer', async () => {
    const db = stack.deps.db;
    const [lab] = await db.select().from(labs).where(eq(labs.name, DEMO_LAB));
    const author = DEMO_SIGN_INS.find((d) => d.role === 'author')!;
    const [who] = await db.select().from(users).where(eq(users.email, author.email));
    const ended = new Date(Date.now() - (RETENTION_RULE.keepDays + 2) * 86400_000);
    const [run] = await db
      .insert(runs)
      .values({ labId: lab!.id, authorId: who!.id, title: 'An old draft nobody published', spec: runSpecSchema.parse({ lattice: { preset: 'square' }, chips: 16 }), status: 'finished', startedAt: ended, finishedAt: ended })
      .returning();
    await stack.deps.blobs.put(`runs/${run!.id}/arrays/heights.npy`, Buffer.alloc(200, 1), 'application/octet-stream');
    const deps = { db, env: stack.env, mailer: stack.deps.mailer, blobs: stack.deps.blobs };
    expect((await sweepRetention(deps)).noticed).toHaveLength(1);
    const later = new Date(Date.now() + (RETENTION_RULE.noticeDays + 1) * 86400_000);
    expect((await sweepRetention(deps, { now: later })).expired.map((e) => e.runId)).toEqual([run!.id]);

    const page = await newPage(browser, url);
    await signIn(page, author.email, author.password, `/runs/${run!.id}`);
    await page.getByText('Expired — artifacts removed').waitFor();
    expect(await page.getByRole('link', { name: 'Deep zoom' }).count()).toBe(0);
    await page.getByRole('button', { name: 'Re-run' }).waitFor();
    await screenshot(page, 'run-expired');

    const adminPage = await newPage(browser, url);
    await signIn(adminPage, admin.email, admin.password, '/admin?tab=storage');
    await adminPage.getByRole('table', { name: 'expired runs' }).locator('tbody tr', { hasText: 'An old draft nobody published' }).waitFor();
    await screenshot(adminPage, 'admin-storage-expired');
  });

  test('a site admin looking at another lab\'s run is not offered to compute it again (the API refuses: only members may)', async () => {
    const db = stack.deps.db;
    const [other] = await db.select().from(labs).where(eq(labs.name, DEMO_OTHER_LAB));
    const owner = DEMO_SIGN_INS.find((d) => d.role === 'other lab')!;
    const [who] = await db.select().from(users).where(eq(users.email, owner.email));
    const [run] = await db
      .insert(runs)
      .values({ labId: other!.id, authorId: who!.id, title: 'A pile of the other lab', spec: runSpecSchema.parse({ lattice: { preset: 'square' }, chips: 16 }), status: 'failed', finishedAt: new Date() })
      .returning();
    const page = await newPage(browser, url);
    await signIn(page, admin.email, admin.password, `/runs/${run!.id}`);
    await page.getByRole('heading', { name: 'A pile of the other lab' }).waitFor();
    await page.getByRole('link', { name: 'Duplicate' }).waitFor();
    expect(await page.getByRole('button', { name: 'Re-run' }).count()).toBe(0);
  });
});
