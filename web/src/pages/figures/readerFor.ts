/**
 * Where /lab/figures/:slug sends someone outside the figure's lab: a published figure is read at
 * its permanent link, not inside another lab's Lab section. Its lab's members and site admins (who
 * see the lab's side: drafts, every version) stay; so does anyone on a figure that is not published
 * (the API answers those with its no-access state). Pure, so each case is tested without a browser.
 * @returns the reader's address, or null to show the lab page
 */
export function readerFor(
  figure: { slug: string; labId: string; publishedAt: string | null; withdrawnAt: string | null },
  me: { user: { isAdmin: boolean }; labs: readonly { id: string }[] } | null,
): string | null {
  const published = figure.publishedAt !== null && figure.withdrawnAt === null;
  const insider = me !== null && (me.user.isAdmin || me.labs.some((l) => l.id === figure.labId));
  return published && !insider ? `/f/${encodeURIComponent(figure.slug)}` : null;
}
