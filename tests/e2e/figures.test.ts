import { beforeAll, describe, expect, test } from 'vitest';
import sharp from 'sharp';
import { eq } from 'drizzle-orm';
import { hashPassword } from '../../api/src/auth/passwords.js';
import { labs, memberships, users } from '../../drizzle/schema.js';
import { pixelsFor } from '../../shared/print-size.js';
import { apiCall, newPage, screenshot, signIn } from './browser.js';
import { useFarmInBrowser } from './farm-in-browser.js';

const PASSWORD = 'figure-press-passphrase';

/**
 * The figure publisher end to end, with the real API and a real farm worker: an author composes a
 * figure from a finished run, orders it, sees it ready, publishes it; a reader opens the permanent
 * link signed out; the author unpublishes; the reader sees that it was withdrawn.
 */
describe('figures in the browser', () => {
  const farm = useFarmInBrowser({ demo: false });
  const email = 'ada.printer@figures.e2e.toppleworks.local';
  const otherEmail = 'cato.neighbour@figures.e2e.toppleworks.local';
  let authorId = '';

  beforeAll(async () => {
    // an invented author in an invented lab
    const [u] = await farm.stack.deps.db.insert(users).values({ email, name: 'Ada Printer', passwordHash: await hashPassword(PASSWORD), emailVerifiedAt: new Date() }).returning();
    const [lab] = await farm.stack.deps.db.insert(labs).values({ name: 'Sandpile Press Lab' }).returning();
    await farm.stack.deps.db.insert(memberships).values({ labId: lab!.id, userId: u!.id, role: 'author' });
    await farm.stack.deps.db.update(users).set({ activeLabId: lab!.id }).where(eq(users.id, u!.id));
    authorId = u!.id;
    // a member of another invented lab, who may read the published figure but not change it
    const [o] = await farm.stack.deps.db.insert(users).values({ email: otherEmail, name: 'Cato Neighbour', passwordHash: await hashPassword(PASSWORD), emailVerifiedAt: new Date() }).returning();
    const [otherLab] = await farm.stack.deps.db.insert(labs).values({ name: 'Neighbouring Lattice Lab' }).returning();
    await farm.stack.deps.db.insert(memberships).values({ labId: otherLab!.id, userId: o!.id, role: 'manager' });
    await farm.stack.deps.db.update(users).set({ activeLabId: otherLab!.id }).where(eq(users.id, o!.id));
  }, 60_000);

  // two prints and a publication on the real farm: 80 s alone, up to 180 s beside other browser files on two cores
  test('compose, order, see it ready, publish, read signed out, unpublish, see "withdrawn"', { timeout: 300_000 }, async () => {
    const page = await newPage(farm.browser, farm.stack.url);
    await signIn(page, email, PASSWORD);
    const me = await apiCall<{ activeLabId: string }>(page, 'GET', '/api/me');
    const submitted = await apiCall<{ run: { id: string } }>(page, 'POST', '/api/runs', { labId: me.body.activeLabId, title: 'A thousand grains for print', spec: { lattice: { preset: 'square' }, chips: 1000 } });
    expect(submitted.status).toBe(201);
    await expect
      .poll(async () => (await apiCall<{ run: { status: string } }>(page, 'GET', `/api/runs/${submitted.body.run.id}`)).body.run.status, { timeout: 90_000, interval: 500 })
      .toBe('finished');

    // an address naming a run that does not exist says so and lets the author pick one: the newest run is not swapped in
    await page.goto('/figures/new?run=00000000-0000-4000-8000-000000000000');
    const refused = page.getByTestId('compose-run-refused');
    await refused.getByText('That run cannot be found').waitFor();
    expect(await page.getByTestId('panel-0').count()).toBe(0);
    await screenshot(page, 'figures-compose-unknown-run');
    await refused.getByLabel('Run to start from').selectOption(submitted.body.run.id);
    await refused.getByRole('button', { name: 'Start from this run' }).click();
    await page.getByTestId('panel-0').waitFor();
    expect(new URL(page.url()).searchParams.get('run')).toBe(submitted.body.run.id);
    expect(await page.getByTestId('panel-0').getByLabel('Run', { exact: true }).inputValue()).toBe(submitted.body.run.id);
    // the title's example is that run's lattice and grain count, not a fixed "n = 10⁶"
    expect(await page.getByLabel('Title').getAttribute('placeholder')).toBe('Square lattice (Z²), n = 10³');

    // compose: the proof follows the settings, the engine's warnings are shown in words
    await page.goto('/figures/new');
    // the run's background is 0 everywhere: its difference layer is not offered
    const difference = page.getByTestId('panel-0').getByLabel('Layer').locator('option[value="difference"]');
    expect(await difference.isDisabled()).toBe(true);
    expect(await difference.textContent()).toMatch(/not for a 0 background/);
    // a palette the run did not draw: the proof says so inside the panel, wrapped, not across the page
    const palettes = await page.getByTestId('panel-0').getByLabel('Palette').locator('option').evaluateAll((os) => os.map((o) => (o as HTMLOptionElement).value));
    await page.getByTestId('panel-0').getByLabel('Palette').selectOption(palettes.find((p) => p !== 'tidewater')!);
    const words = page.getByTestId('proof-placeholder-0').locator('foreignObject div');
    await expect.poll(() => words.textContent()).toMatch(/no proof image for this palette; the print draws it from the arrays/);
    const inside = await page.getByTestId('proof-placeholder-0').evaluate((g) => {
      const box = g.querySelector('rect')!.getBoundingClientRect();
      const div = g.querySelector('foreignObject div') as HTMLElement;
      const text = div.getBoundingClientRect();
      return div.scrollWidth <= div.clientWidth && div.scrollHeight <= div.clientHeight && text.left >= box.left - 1 && text.right <= box.right + 1;
    });
    expect(inside).toBe(true);
    await screenshot(page, 'figures-compose-placeholder');
    await page.getByTestId('panel-0').getByLabel('Palette').selectOption('tidewater');
    // without a title the save button is greyed out and says why, beside it
    await expect.poll(() => page.getByTestId('save-blocked').textContent()).toBe('Give the figure a title first.');
    expect(await page.getByRole('button', { name: 'Create the figure' }).isDisabled()).toBe(true);
    await page.getByLabel('Title').fill('A thousand grains on Z²');
    await expect.poll(() => page.getByTestId('save-blocked').count()).toBe(0);
    await page.getByLabel(/^Caption/).fill('Final stable heights after 1000 grains are added at the origin of the square lattice.');
    await page.getByTestId('proof').waitFor();
    await page.getByLabel('Magnification').selectOption('fixed');
    await page.getByLabel('px per cell').fill('200');
    await page.getByTestId('proof-warnings').getByText(/cannot be met at this resolution/).waitFor();
    await screenshot(page, 'figures-compose-warning');
    await page.getByLabel('px per cell').fill('8');
    await expect.poll(() => page.getByTestId('proof-warnings').count()).toBe(0);
    await page.getByText('8 × 8 printed pixels per cell: nothing is reduced.').waitFor();
    // a resolution out of range is named in the words of the other forms (it used to read
    // 'dpi: Too big: expected number to be <=1200'), and the figure cannot be created meanwhile
    await page.getByLabel('DPI', { exact: true }).fill('5000');
    await page.getByText('These settings are not valid yet').waitFor();
    await page.getByText('DPI: must be at most 1,200', { exact: true }).waitFor();
    expect(await page.getByRole('button', { name: 'Create the figure' }).isDisabled()).toBe(true);
    await page.getByLabel('DPI', { exact: true }).fill('300');
    await page.getByText('These settings are not valid yet').waitFor({ state: 'detached' });
    // the proof's panel image has loaded from the run's stored whole-pile image
    await expect.poll(() => page.locator('[data-testid="proof"] image').count()).toBe(1);
    // the proof shows the print's legend (read from the run's stored view) and the caption's lines
    await page.getByTestId('proof-legend').getByText('Final height', { exact: true }).waitFor();
    await expect.poll(() => page.getByTestId('proof-legend').locator('rect').count()).toBeGreaterThan(3);
    expect(await page.getByTestId('proof-legend-missing').count()).toBe(0);
    await page.getByTestId('proof-text').getByText(/^Final stable heights/).waitFor();
    await page.waitForTimeout(500);
    await screenshot(page, 'figures-compose');

    // the region, drawn on the run's deep-zoom view: a drag gives the typed coordinates, typing moves the rectangle
    const run = (await apiCall<{ run: { stats: { shape: number[]; origin: number[] } } }>(page, 'GET', `/api/runs/${submitted.body.run.id}`)).body.run;
    const [H, W] = run.stats.shape as [number, number];
    const [oy, ox] = run.stats.origin as [number, number];
    const panel = page.getByTestId('panel-0');
    await panel.getByRole('button', { name: 'Draw the region on the view' }).click();
    const drawer = panel.getByTestId('region-drawer');
    await drawer.and(page.locator('[data-ready]')).waitFor();
    await page.waitForTimeout(800);
    const box = (await drawer.getByTestId('deep-zoom').boundingBox())!;
    // OpenSeadragon's home view fits the whole image into the viewer, centred (homeFillsViewer defaults to false)
    const cell = Math.min(box.width / W, box.height / H);
    const left = box.x + (box.width - cell * W) / 2;
    const top = box.y + (box.height - cell * H) / 2;
    const centre = (x: number, y: number) => ({ x: left + (x + ox + 0.5) * cell, y: top + (y + oy + 0.5) * cell });
    const from = centre(-6, -4);
    const to = centre(3, 5);
    await page.mouse.move(from.x, from.y);
    await page.mouse.down();
    await page.mouse.move(to.x, to.y, { steps: 12 });
    await drawer.getByTestId('region-rect-pending').waitFor();
    await page.mouse.up();
    const field = (name: string) => panel.getByLabel(name, { exact: true });
    await expect.poll(() => field('xMin').inputValue()).toBe('-6');
    expect([await field('xMax').inputValue(), await field('yMin').inputValue(), await field('yMax').inputValue()]).toEqual(['3', '-4', '5']);
    await drawer.getByTestId('region-readout').getByText('x −6..3, y −4..5 · 10 × 10 cells').waitFor();
    // the drag drew, it did not pan: the rectangle sits on the outer edges of those cells
    const edges = async () => (await drawer.getByTestId('region-rect').boundingBox())!;
    const expectRect = async (x0: number, x1: number, y0: number, y1: number) => {
      const r = await edges();
      // measured again: the coordinate fields that appeared above moved the view down the page
      const now = (await drawer.getByTestId('deep-zoom').boundingBox())!;
      expect(Math.abs(r.x - (now.x - box.x + left + (x0 + ox) * cell))).toBeLessThan(1.5);
      expect(Math.abs(r.y - (now.y - box.y + top + (y0 + oy) * cell))).toBeLessThan(1.5);
      expect(Math.abs(r.width - (x1 - x0 + 1) * cell)).toBeLessThan(1.5);
      expect(Math.abs(r.height - (y1 - y0 + 1) * cell)).toBeLessThan(1.5);
    };
    await expectRect(-6, 3, -4, 5);
    // typed key by key, as a person does: the minus sign on the way to "-2" is not turned into 0 ("0-2" → 2),
    // and a field emptied on the way keeps the region as it was until a number is there again
    await field('xMin').fill('');
    await field('xMin').pressSequentially('-2', { delay: 30 });
    expect(await field('xMin').inputValue()).toBe('-2');
    await field('yMax').fill('8');
    await expect.poll(async () => Math.round((await edges()).width / cell)).toBe(6);
    await expectRect(-2, 3, -4, 8);
    await screenshot(page, 'figures-compose-region');
    await page.getByRole('button', { name: 'Create the figure' }).click();
    await page.waitForURL(/\/lab\/figures\/a-thousand-grains-on-z2$/);

    // order: a version on the farm, then ready with its files listed
    await page.getByRole('button', { name: 'Order the print' }).click();
    await expect.poll(() => page.getByTestId('version-1-status').textContent(), { timeout: 90_000 }).toBe('ready');
    const files = page.getByTestId('figure-files');
    await files.getByText('a-thousand-grains-on-z2-v1.pdf').waitFor();
    await expect.poll(async () => (await files.locator('tbody tr').count())).toBe(3);
    // sizes in the words the ready mail uses (shared/file-size.ts), not raw byte counts
    const sizes = await files.locator('tbody tr td:nth-child(2)').allTextContents();
    expect(sizes.map((t) => t.trim()).filter((t) => !/^\d[\d,.]* (kB|MB)$/.test(t))).toEqual([]);
    await screenshot(page, 'figures-ready');

    // the PNG behind the listed link is the ordered size: 90 mm wide at 300 DPI = 1063 px (pixels = round(in × DPI), journal artwork guidelines)
    const href = await files.getByRole('link', { name: 'a-thousand-grains-on-z2-v1.png' }).getAttribute('href');
    // with the signed-in page's cookies (the figure is still private), following the redirect to the object store
    const download = await page.request.get(new URL(href!, farm.stack.url).toString());
    expect(download.status()).toBe(200);
    const png = await download.body();
    expect((await sharp(png).metadata()).width).toBe(pixelsFor(90, 300));

    // before publishing, the run's citation says plainly that its link is for the lab only
    const runId = submitted.body.run.id;
    await page.goto(`/runs/${runId}/view`);
    await page.getByTestId('run-link-private').waitFor();
    await expect.poll(() => page.getByTestId('run-bibtex').textContent()).toContain('the link opens only for members of the lab');
    await page.goto('/lab/figures/a-thousand-grains-on-z2');

    await page.getByRole('button', { name: 'Publish version 1' }).click();
    await page.getByText('Anyone with the link can read').waitFor();
    // the whole permanent address, with Copy beside it
    expect(await page.getByTestId('figure-permalink').textContent()).toBe(`${farm.stack.url}/f/a-thousand-grains-on-z2`);
    await page.getByTestId('figure-permalink').locator('..').getByRole('button', { name: 'Copy' }).waitFor();
    await screenshot(page, 'figures-published');

    // the viewer's toolbar keeps one row at common laptop widths, even with a second pane and its lock,
    // and the panes with their legends stay on the screen
    for (const width of [1280, 1024]) {
      await page.setViewportSize({ width, height: 800 });
      await page.goto(`/runs/${runId}/view?with=layer:odometer`);
      const controls = [page.getByRole('link', { name: /A thousand grains for print/ }), page.getByLabel('Layer'), page.getByLabel('Palette'), page.getByLabel('Beside it'), page.getByLabel('Lock'), page.getByRole('button', { name: 'Whole pile' }), page.getByRole('button', { name: 'Origin, single cells' }), page.getByRole('button', { name: 'PNG of this view' })];
      await controls[4]!.waitFor();
      const boxes = await Promise.all(controls.map(async (c) => (await c.boundingBox())!));
      const middle = (b: { y: number; height: number }) => b.y + b.height / 2;
      for (const [i, b] of boxes.entries()) {
        expect(Math.abs(middle(b) - middle(boxes[0]!)), `control ${i} at ${width} px`).toBeLessThan(4);
        if (i > 0) expect(b.x, `control ${i} at ${width} px`).toBeGreaterThanOrEqual(boxes[i - 1]!.x + boxes[i - 1]!.width);
      }
      expect(boxes.at(-1)!.x + boxes.at(-1)!.width).toBeLessThanOrEqual(width);
      const legend = page.getByText('final height', { exact: true }).first();
      await legend.waitFor();
      expect((await legend.boundingBox())!.y + 20).toBeLessThanOrEqual(800);
      await screenshot(page, `figures-viewer-toolbar-${width}`);
    }
    await page.setViewportSize({ width: 1280, height: 800 });

    // published: the run is cited by the figure's permanent link, and the entry is shown whole
    await page.goto(`/runs/${runId}/view`);
    await page.getByTestId('run-link-public').waitFor();
    // the viewer writes n as the other pages do: 1,000 (10³) with a real superscript
    const grains = page.getByTestId('viewer-grains');
    expect(await grains.innerHTML()).toMatch(/\(10<sup[^>]*>3<\/sup>\)/);
    // as text the superscript 3 follows the 10 directly, with no caret
    expect(await grains.textContent()).toContain('n = 1,000 (103) grains');
    const runBib = page.getByTestId('run-bibtex');
    const cited = /\\url\{([^}]+)\}/.exec((await runBib.textContent()) ?? '')?.[1];
    expect(cited).toBe(`${farm.stack.url}/f/a-thousand-grains-on-z2`);
    expect(await runBib.evaluate((el) => el.scrollWidth <= el.clientWidth)).toBe(true);
    await screenshot(page, 'figures-run-citation');
    await page.goto('/lab/figures/a-thousand-grains-on-z2');

    // a reader without an account follows the permanent link
    const reader = await newPage(farm.browser, farm.stack.url);
    // a quiet console: public pages ask who is signed in, and "nobody" must not show as an error
    const noise: string[] = [];
    reader.on('console', (m) => void (m.type() === 'error' && noise.push(`console: ${m.text()}`)));
    reader.on('response', (r) => void (r.status() >= 400 && noise.push(`${r.status()} ${r.request().method()} ${new URL(r.url()).pathname}`)));
    await reader.goto('/f/a-thousand-grains-on-z2');
    await reader.getByRole('heading', { name: 'A thousand grains on Z²' }).waitFor();
    await reader.getByTestId('figure-files').getByText('a-thousand-grains-on-z2-v1.tif').waitFor();
    // the background with its value (the run's spec: constant height 0), not only its kind
    await reader.getByText('constant 0', { exact: true }).waitFor();
    // the citation names the version, whose link never changes
    await expect.poll(() => reader.getByTestId('bibtex').textContent()).toMatch(/@misc\{a-thousand-grains-on-z2-v1,[\s\S]*\\url\{[^}]*\/f\/a-thousand-grains-on-z2\/v\/1\}/);
    expect(await reader.getByTestId('bibtex').evaluate((el) => el.scrollWidth <= el.clientWidth)).toBe(true);
    // beside it, the deep zoom's IIIF image service, which opens without an account too
    // (IIIF Image API 3.0, https://iiif.io/api/image/3.0/#51-image-information-request: info.json's id is the service's base)
    const iiif = (await reader.getByTestId('figure-iiif').getAttribute('href'))!;
    expect(new URL(iiif).pathname).toBe('/api/figures/a-thousand-grains-on-z2/views/heights/tidewater/iiif/info.json');
    const info = await reader.evaluate(async (u) => (await fetch(u, { credentials: 'omit' })).json(), iiif) as { id: string; type: string };
    expect(info.type).toBe('ImageService3');
    expect(new URL(info.id).pathname).toBe(new URL(iiif).pathname.replace(/\/info\.json$/, ''));
    // the run's citation opens for this reader without an account
    await reader.goto(cited!);
    await reader.getByRole('heading', { name: 'A thousand grains on Z²' }).waitFor();
    await reader.getByTestId('figure-zoom').waitFor({ timeout: 20_000 });
    await reader.waitForTimeout(1000);
    await screenshot(reader, 'figures-reader');
    // on a phone (390 px across) the permanent link fits the screen: no sideways scrolling, the pile
    // as wide as the window, the files and the citation inside it (the page once kept a laptop's 1,024 px)
    await reader.setViewportSize({ width: 390, height: 844 });
    await reader.goto(cited!);
    await reader.getByTestId('figure-zoom').locator('canvas').first().waitFor({ timeout: 20_000 });
    await reader.waitForTimeout(800);
    expect(await reader.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)).toBeLessThanOrEqual(0);
    const zoom = (await reader.getByTestId('figure-zoom').boundingBox())!;
    expect([zoom.x, zoom.width]).toEqual([0, 390]);
    for (const id of ['figure-files', 'bibtex', 'figure-iiif']) {
      const box = (await reader.getByTestId(id).boundingBox())!;
      expect(box.x + box.width, id).toBeLessThanOrEqual(390);
    }
    await screenshot(reader, 'figures-reader-phone');
    // every other page a signed-out reader reaches fits the phone too: nothing scrolls sideways, and
    // nothing (a figure's entry, a form) sticks out past the screen's edge (a page of its own: the
    // made-up invitation is refused on purpose, which the reader's quiet console must not count)
    const phone = await newPage(farm.browser, farm.stack.url);
    await phone.setViewportSize({ width: 390, height: 844 });
    for (const [name, path, title] of [
      ['landing', '/', 'Exact abelian sandpiles, computed at scale and printed to size.'],
      ['figure-index', '/figures', 'Published figures'],
      ['sign-in', '/sign-in', 'Sign in'],
      ['sign-up', '/sign-up', 'Create an account'],
      ['forgot-password', '/forgot-password', 'Reset your password'],
      ['reset-password', '/reset-password', 'Choose a new password'],
      ['verify-email', '/verify-email', 'Confirm your e-mail'],
      ['invitation', '/invitations/no-such-invitation-token-at-all', 'This invitation is no longer open'],
      ['not-found', '/no/such/page', 'No page at this address'],
    ] as const) {
      await phone.goto(path);
      await phone.locator('main').getByText(title, { exact: true }).first().waitFor();
      if (name === 'figure-index') await phone.getByRole('link', { name: 'A thousand grains on Z²' }).waitFor();
      await phone.waitForTimeout(300);
      expect(await phone.evaluate(() => document.documentElement.scrollWidth), name).toBeLessThanOrEqual(390);
      const past = await phone.evaluate(() => [...document.querySelectorAll('main *')].filter((el) => el.getBoundingClientRect().right > 390.5).map((el) => el.outerHTML.slice(0, 80)));
      expect(past, name).toEqual([]);
      await screenshot(phone, `tour8b-phone-${name}`);
    }
    await phone.close();
    await reader.setViewportSize({ width: 1280, height: 800 });
    await reader.goto('/figures');
    await reader.getByRole('link', { name: 'A thousand grains on Z²' }).waitFor();
    await reader.getByText('constant 0', { exact: true }).waitFor();
    expect(noise).toEqual([]);

    // a member of another lab cannot open the composer on it: no form, no error thrown on the page
    const other = await newPage(farm.browser, farm.stack.url);
    const otherErrors: Error[] = [];
    other.on('pageerror', (err) => otherErrors.push(err));
    await signIn(other, otherEmail, PASSWORD);
    await other.goto('/lab/figures/a-thousand-grains-on-z2/edit');
    await other.getByTestId('compose-no-access').getByText('Only its lab can change this figure').waitFor();
    expect(await other.getByLabel('Title').count()).toBe(0);
    await screenshot(other, 'figures-other-lab-edit');
    await other.goto('/lab/figures/no-such-figure-here/edit');
    await other.getByText('No figure to edit here').waitFor();
    // nor start a figure from its run: refused in words, and this lab has no finished run to offer instead
    await other.goto(`/figures/new?run=${submitted.body.run.id}`);
    await other.getByTestId('compose-run-refused').getByText('That run cannot be found').waitFor();
    await other.getByTestId('compose-run-refused').getByText(/^Figures are composed from finished runs/).waitFor();
    expect(await other.getByTestId('panel-0').count()).toBe(0);
    // the lab page of a published figure sends another lab's member to its permanent link
    await other.goto('/lab/figures/a-thousand-grains-on-z2');
    await other.waitForURL(/\/f\/a-thousand-grains-on-z2$/);
    await other.getByRole('heading', { name: 'A thousand grains on Z²' }).waitFor();
    expect(otherErrors).toEqual([]);

    // edited after publishing: readers keep the published words until a new version is printed and published
    const authorErrors: Error[] = [];
    page.on('pageerror', (err) => authorErrors.push(err));
    await page.goto('/lab/figures/a-thousand-grains-on-z2/edit');
    await page.getByTestId('compose-published-note').getByText('Published: readers see version 1').waitFor();
    await page.getByLabel(/^Caption/).fill('Edited after publishing: heights of 1000 grains.');
    // a refused save (here: the author left the lab meanwhile) is shown by the button, never thrown
    const [membership] = await farm.stack.deps.db.delete(memberships).where(eq(memberships.userId, authorId)).returning();
    await page.getByRole('button', { name: 'Save the composition' }).click();
    await page.getByRole('alert').getByText(/only members of the figure's lab can do this/).waitFor();
    await farm.stack.deps.db.insert(memberships).values(membership!);
    await page.getByRole('button', { name: 'Save the composition' }).click();
    await page.waitForURL(/\/lab\/figures\/a-thousand-grains-on-z2$/);
    await page.getByTestId('unpublished-changes').getByText('Changes not yet published').waitFor();
    await screenshot(page, 'figures-unpublished-changes');
    await reader.goto('/f/a-thousand-grains-on-z2');
    await expect.poll(() => reader.getByTestId('figure-caption').textContent()).toBe('Final stable heights after 1000 grains are added at the origin of the square lattice.');

    // printed and published again: version 2 for readers, version 1 kept at its own link
    await page.getByRole('button', { name: 'Print again' }).click();
    await expect.poll(() => page.getByTestId('version-2-status').textContent(), { timeout: 90_000 }).toBe('ready');
    await page.getByRole('button', { name: 'Publish version 2' }).click();
    await page.getByTestId('version-2-shown').waitFor();
    expect(await page.getByTestId('unpublished-changes').count()).toBe(0);
    await reader.goto('/f/a-thousand-grains-on-z2');
    await expect.poll(() => reader.getByTestId('figure-caption').textContent()).toBe('Edited after publishing: heights of 1000 grains.');
    await reader.getByTestId('figure-files').first().getByText('a-thousand-grains-on-z2-v2.pdf').waitFor();
    await reader.getByTestId('figure-history').getByRole('link', { name: 'Version 1' }).click();
    // a client-side navigation: no load event to wait for
    await expect.poll(() => new URL(reader.url()).pathname).toBe('/f/a-thousand-grains-on-z2/v/1');
    await reader.getByTestId('older-version').waitFor();
    await expect.poll(() => reader.getByTestId('figure-caption').textContent()).toBe('Final stable heights after 1000 grains are added at the origin of the square lattice.');
    await screenshot(reader, 'figures-reader-version-1');
    expect(authorErrors).toEqual([]);

    // the author withdraws it, after saying yes to a question that tells what readers will see
    page.once('dialog', (d) => void d.dismiss());
    await page.getByRole('button', { name: 'Unpublish' }).click();
    await page.getByText('Anyone with the link can read').waitFor();
    expect(await page.getByText(/^Withdrawn on/).count()).toBe(0);
    let question = '';
    page.once('dialog', (d) => {
      question = d.message();
      void d.accept();
    });
    await page.getByRole('button', { name: 'Unpublish' }).click();
    await page.getByText(/^Withdrawn on/).waitFor();
    expect(question).toMatch(/will see only that it was withdrawn/);
    await reader.goto('/f/a-thousand-grains-on-z2');
    await reader.getByTestId('figure-withdrawn').getByText('“A thousand grains on Z²” was withdrawn').waitFor();
    await screenshot(reader, 'figures-withdrawn');
    await reader.goto('/figures');
    await reader.getByText('Nothing published yet').waitFor();
  });
});
