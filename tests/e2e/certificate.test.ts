import { beforeAll, describe, expect, test } from 'vitest';
import { eq } from 'drizzle-orm';
import { hashPassword } from '../../api/src/auth/passwords.js';
import { labs, memberships, runs, users } from '../../drizzle/schema.js';
import { certificateSchema, type RunStatsJson } from '../../shared/run-stats.js';
import { apiCall, newPage, screenshot, signIn } from './browser.js';
import { useFarmInBrowser } from './farm-in-browser.js';

const PASSWORD = 'certificate-reader-passphrase';

/**
 * The engine's exactness certificate where people read results: the run page shows the verdict with
 * its checks, and a reader of the published figure (no account) sees each panel's run certified.
 * Real API, real farm worker, real runs; the statistics of older or failing runs are written to the
 * run's row as the API would have stored them.
 */
describe('certificates in the browser', () => {
  const farm = useFarmInBrowser({ demo: false });
  const email = 'vera.checker@certificate.e2e.toppleworks.local';

  beforeAll(async () => {
    // an invented author in an invented lab
    const [u] = await farm.stack.deps.db.insert(users).values({ email, name: 'Vera Checker', passwordHash: await hashPassword(PASSWORD), emailVerifiedAt: new Date() }).returning();
    const [lab] = await farm.stack.deps.db.insert(labs).values({ name: 'Certified Piles Lab' }).returning();
    await farm.stack.deps.db.insert(memberships).values({ labId: lab!.id, userId: u!.id, role: 'author' });
    await farm.stack.deps.db.update(users).set({ activeLabId: lab!.id }).where(eq(users.id, u!.id));
  }, 60_000);

  test('the run page shows the verdict and its checks; the figure reader shows it for each panel', { timeout: 240_000 }, async () => {
    const page = await newPage(farm.browser, farm.stack.url);
    await signIn(page, email, PASSWORD);
    const me = await apiCall<{ activeLabId: string }>(page, 'GET', '/api/me');
    const submit = async (title: string, chips: number) => {
      const res = await apiCall<{ run: { id: string } }>(page, 'POST', '/api/runs', { labId: me.body.activeLabId, title, spec: { lattice: { preset: 'square' }, chips } });
      expect(res.status).toBe(201);
      return res.body.run.id;
    };
    const ids = [await submit('A thousand certified grains', 1000), await submit('Two thousand certified grains', 2000)];
    const stats: RunStatsJson[] = [];
    for (const id of ids) {
      await expect.poll(async () => (await apiCall<{ run: { status: string } }>(page, 'GET', `/api/runs/${id}`)).body.run.status, { timeout: 120_000, interval: 500 }).toBe('finished');
      stats.push((await apiCall<{ run: { stats: RunStatsJson } }>(page, 'GET', `/api/runs/${ids[stats.length]}`)).body.run.stats);
    }
    const cert = certificateSchema.parse(stats[0]!.certificate);
    expect(cert.passed).toBe(true);

    // the run page: the verdict, every check, and how the engine computed it
    await page.goto(`/runs/${ids[0]}`);
    const verdict = page.getByTestId('run-certificate');
    await verdict.getByText('Certified exact').waitFor();
    expect(await verdict.getAttribute('data-verdict')).toBe('passed');
    const text = (await verdict.textContent()) ?? '';
    for (const words of ['Stable.', 'Grains conserved.', 'Odometer explained.', 'Minimal.', 'arXiv:0901.3805', 'How it was computed:']) expect(text).toContain(words);
    expect(text).toMatch(cert.method === 'seeded' ? /seeded from coarser solutions, with \d+ repair rounds?/ : cert.method === 'legal' ? /legal topplings/ : /closed form/);
    await screenshot(page, 'cert-run');

    // a figure of both runs, printed by the farm and published
    const slug = 'two-certified-piles';
    const created = await apiCall(page, 'POST', '/api/figures', {
      labId: me.body.activeLabId,
      title: 'Two certified piles',
      slug,
      spec: { panels: [{ runId: ids[0] }, { runId: ids[1] }], grid: { rows: 1, cols: 2 }, size: { kind: 'column', column: 'full' }, dpi: 150 },
    });
    expect(created.status).toBe(201);
    expect((await apiCall(page, 'POST', `/api/figures/${slug}/versions`, { formats: ['png'] })).status).toBe(202);
    await expect
      .poll(async () => (await apiCall<{ figure: { versions: { status: string }[] } }>(page, 'GET', `/api/figures/${slug}`)).body.figure.versions[0]?.status, { timeout: 120_000, interval: 1000 })
      .toBe('ready');
    expect((await apiCall(page, 'POST', `/api/figures/${slug}/publish`)).status).toBe(200);

    // a reader without an account: one line per panel's run, under the labels printed on the figure
    const reader = await newPage(farm.browser, farm.stack.url);
    await reader.goto(`/f/${slug}`);
    await reader.getByRole('heading', { name: 'Two certified piles' }).waitFor();
    const lines = reader.getByTestId('figure-certificate');
    await expect.poll(() => lines.count()).toBe(2);
    for (const line of await lines.all()) {
      expect(await line.getAttribute('data-verdict')).toBe('passed');
      expect(await line.textContent()).toMatch(/^Certified exact — stable, grains conserved, odometer explained, minimal \(/);
    }
    await reader.getByText('Panel (a)', { exact: true }).waitFor();
    await reader.getByText('Panel (b)', { exact: true }).waitFor();
    // two runs: each line names its own run; no figure-wide "Grains at the origin" of the first run alone,
    // and no empty caption box (this figure has none)
    expect(await reader.getByText('Grains at the origin').count()).toBe(0);
    await reader.getByText(/2,000 .*grains on square lattice \(Z²\), constant background/).first().waitFor();
    expect(await reader.getByTestId('figure-caption').count()).toBe(0);
    await reader.getByRole('heading', { name: 'The runs' }).scrollIntoViewIfNeeded();
    await screenshot(reader, 'cert-figure-reader');

    // statistics stored before certificates existed: the run page says so, and so does the reader
    const { certificate: _dropped, ...older } = stats[1]!;
    await farm.stack.deps.db.update(runs).set({ stats: older }).where(eq(runs.id, ids[1]!));
    await page.goto(`/runs/${ids[1]}`);
    await page.getByTestId('run-certificate').getByText('computed before certificates existed', { exact: false }).waitFor();
    expect(await page.getByTestId('run-certificate').getAttribute('data-verdict')).toBe('none');
    await screenshot(page, 'cert-run-older');
    await reader.reload();
    await reader.locator('[data-testid="figure-certificate"][data-verdict="none"]').getByText(/before certificates existed/).waitFor();

    // a certificate that did not pass (the engine never publishes one): said plainly, failing check first
    const failing = { ...stats[1]!, certificate: { ...certificateSchema.parse(stats[1]!.certificate), minimal: false, peeledSites: 3, passed: false } };
    await farm.stack.deps.db.update(runs).set({ stats: failing }).where(eq(runs.id, ids[1]!));
    await page.goto(`/runs/${ids[1]}`);
    const failed = page.getByTestId('run-certificate');
    await failed.getByText('Certificate failed').waitFor();
    expect(await failed.getAttribute('data-verdict')).toBe('failed');
    expect(await failed.textContent()).toMatch(/do not rely on this result[\s\S]*3 sites could topple once less/);
    await screenshot(page, 'cert-run-failed');
  });
});
