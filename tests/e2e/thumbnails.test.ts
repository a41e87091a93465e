import { beforeAll, describe, expect, test } from 'vitest';
import sharp from 'sharp';
import { eq } from 'drizzle-orm';
import type { Page } from 'playwright-core';
import { hashPassword } from '../../api/src/auth/passwords.js';
import { labs, memberships, runs, users } from '../../drizzle/schema.js';
import { apiCall, newPage, screenshot, signIn } from './browser.js';
import { useFarmInBrowser } from './farm-in-browser.js';

const PASSWORD = 'thumbnail-scan-passphrase';

/**
 * Pictures in the lists, with the real API and a real farm worker: the lab's runs show each drawn
 * pile and say in words why others have none; the lab's figures show their printed page or first
 * panel; the public index shows published pages to a reader without an account.
 */
describe('pictures in the lists', () => {
  const farm = useFarmInBrowser({ demo: false });
  const email = 'iris.scanner@thumbs.e2e.toppleworks.local';
  let labId = '';
  let authorId = '';

  beforeAll(async () => {
    const [u] = await farm.stack.deps.db.insert(users).values({ email, name: 'Iris Scanner', passwordHash: await hashPassword(PASSWORD), emailVerifiedAt: new Date() }).returning();
    const [lab] = await farm.stack.deps.db.insert(labs).values({ name: 'Recognition Lab' }).returning();
    await farm.stack.deps.db.insert(memberships).values({ labId: lab!.id, userId: u!.id, role: 'author' });
    await farm.stack.deps.db.update(users).set({ activeLabId: lab!.id }).where(eq(users.id, u!.id));
    labId = lab!.id;
    authorId = u!.id;
  }, 60_000);

  /** Runs in the states that have no picture, as the farm and the retention sweep leave them (no job is sent for them). */
  async function runsWithoutPictures(): Promise<void> {
    const spec = { lattice: { preset: 'square' }, chips: 100, sources: [], background: { kind: 'constant', height: 0 } } as never;
    const at = (minutes: number) => new Date(Date.now() - minutes * 60_000);
    await farm.stack.deps.db.insert(runs).values([
      { labId, authorId, title: 'Waiting pile', spec, status: 'queued', createdAt: at(1) },
      { labId, authorId, title: 'Broken pile', spec, status: 'failed', error: 'the worker ran out of memory', createdAt: at(2), finishedAt: at(2) },
      { labId, authorId, title: 'Expired pile', spec, status: 'finished', createdAt: at(3), finishedAt: at(3), artifactsExpiredAt: at(3) },
      // finished, but its views are not in the store: a run drawn before this store existed
      { labId, authorId, title: 'Pile without views', spec, status: 'finished', createdAt: at(4), finishedAt: at(4) },
    ]);
  }

  /** Every picture in the page has loaded with pixels, is drawn at its fixed size, and is not one flat colour. */
  async function expectLoadedPictures(page: Page, count: number, size: number): Promise<void> {
    const images = page.locator('img[data-thumbnail="image"]');
    await expect.poll(() => images.count(), { timeout: 20_000 }).toBe(count);
    for (let i = 0; i < count; i++) {
      const img = images.nth(i);
      await img.scrollIntoViewIfNeeded();
      await expect.poll(() => img.evaluate((el) => (el as HTMLImageElement).complete && (el as HTMLImageElement).naturalWidth > 0), { timeout: 20_000 }).toBe(true);
      expect(await img.getAttribute('loading')).toBe('lazy');
      const box = (await img.boundingBox())!;
      expect([Math.round(box.width), Math.round(box.height)]).toEqual([size, size]);
      const stats = await sharp(await img.screenshot()).stats();
      expect(Math.max(...stats.channels.slice(0, 3).map((c) => c.stdev))).toBeGreaterThan(8);
    }
  }

  test('runs, the lab\'s figures and the public index show pictures; runs without one say why', { timeout: 240_000 }, async () => {
    const page = await newPage(farm.browser, farm.stack.url);
    await signIn(page, email, PASSWORD);
    const submit = async (title: string, spec: unknown) => {
      const res = await apiCall<{ run: { id: string } }>(page, 'POST', '/api/runs', { labId, title, spec });
      expect(res.status).toBe(201);
      return res.body.run.id;
    };
    const square = await submit('Square pile', { lattice: { preset: 'square' }, chips: 1000 });
    const triangular = await submit('Triangular pile', { lattice: { preset: 'triangular' }, chips: 1500 });
    for (const id of [square, triangular]) {
      await expect
        .poll(async () => (await apiCall<{ run: { status: string } }>(page, 'GET', `/api/runs/${id}`)).body.run.status, { timeout: 120_000, interval: 500 })
        .toBe('finished');
    }
    await runsWithoutPictures();

    // two figures: one printed and published, one a draft never printed (its first panel stands in)
    const compose = async (title: string, runId: string) => {
      const res = await apiCall<{ figure: { slug: string } }>(page, 'POST', '/api/figures', {
        labId,
        title,
        caption: `${title}: final heights.`,
        spec: { panels: [{ runId, layer: 'heights' }], size: { kind: 'column', column: 'single', heightMm: 70 }, dpi: 300 },
      });
      expect(res.status).toBe(201);
      return res.body.figure.slug;
    };
    const published = await compose('Square pile on a page', square);
    await compose('Triangular draft', triangular);
    expect((await apiCall(page, 'POST', `/api/figures/${published}/versions`, { formats: ['png'] })).status).toBe(202);
    await expect
      .poll(async () => (await apiCall<{ figure: { latestVersion: number | null } }>(page, 'GET', `/api/figures/${published}`)).body.figure.latestVersion, { timeout: 120_000, interval: 500 })
      .toBe(1);
    expect((await apiCall(page, 'POST', `/api/figures/${published}/publish`)).status).toBe(200);

    // the run list: the two drawn piles as pictures, the other four boxes in words, every box the same size
    await page.goto('/runs');
    await page.getByRole('link', { name: 'Square pile', exact: true }).waitFor();
    await expectLoadedPictures(page, 2, 96);
    const placeholders = page.locator('[data-thumbnail="placeholder"]');
    await expect.poll(() => placeholders.allTextContents(), { timeout: 20_000 }).toEqual(['waiting for the farm', 'failed: nothing to show', 'artifacts removed', 'no picture stored']);
    for (const box of await placeholders.all()) {
      const b = (await box.boundingBox())!;
      expect([Math.round(b.width), Math.round(b.height)]).toEqual([96, 96]);
    }
    expect(await page.locator('tbody tr', { hasText: 'Pile without views' }).locator('[data-thumbnail="placeholder"]').textContent()).toBe('no picture stored');
    // one link per row for the keyboard and screen readers: the picture's link is the mouse's only
    expect(await page.getByRole('link', { name: 'Square pile' }).count()).toBe(1);
    await screenshot(page, 'thumbs-runs');

    // the lab's figures: the printed page (JPEG) and the draft's first panel (PNG)
    await page.goto('/lab/figures');
    await page.getByRole('link', { name: 'Triangular draft', exact: true }).waitFor();
    await expectLoadedPictures(page, 2, 96);
    const sources = await page.locator('img[data-thumbnail="image"]').evaluateAll((els) => els.map((e) => (e as HTMLImageElement).src));
    const paths = sources.map((s) => new URL(s).pathname);
    expect(paths).toContain(`/api/figures/${published}/thumbnail`);
    expect(paths.filter((p) => /^\/api\/figures\/triangular-draft[a-z0-9-]*\/thumbnail$/.test(p))).toHaveLength(1);
    await screenshot(page, 'thumbs-lab-figures');

    // a reader without an account: the published page in the public index
    const reader = await newPage(farm.browser, farm.stack.url);
    await reader.goto('/figures');
    await reader.getByRole('link', { name: 'Square pile on a page', exact: true }).waitFor();
    await expectLoadedPictures(reader, 1, 128);
    await screenshot(reader, 'thumbs-figures-index');
  });
});
