import { expect } from 'vitest';
import type { Page } from 'playwright-core';

/**
 * The page is no wider than the window, and nothing sticks out past its right edge except inside a
 * frame that clips or scrolls it (a wide table's own scroller); the failure names what sticks out.
 */
export async function expectNoSidewaysScroll(page: Page, name: string, width: number) {
  const { scrollWidth, innerWidth, past } = await page.evaluate(() => {
    const edge = document.documentElement.clientWidth + 0.5;
    const clipped = (el: Element) => {
      for (let a = el.parentElement; a && a !== document.body; a = a.parentElement) if (getComputedStyle(a).overflowX !== 'visible') return true;
      return false;
    };
    const past = [...document.querySelectorAll('body *')]
      .filter((el) => el.getBoundingClientRect().right > edge && !clipped(el))
      .map((el) => `${el.tagName.toLowerCase()}.${el.getAttribute('class') ?? ''}`.slice(0, 100));
    return { scrollWidth: document.documentElement.scrollWidth, innerWidth: window.innerWidth, past };
  });
  expect(innerWidth, name).toBe(width);
  expect(past, name).toEqual([]);
  expect(scrollWidth, name).toBeLessThanOrEqual(innerWidth);
}
