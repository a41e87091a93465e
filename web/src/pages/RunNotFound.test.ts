import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { createMemoryRouter, RouterProvider } from 'react-router';
import { describe, expect, test } from 'vitest';
import { NotFound } from './NotFound.js';
import { RunNotFoundPage } from './RunNotFound.js';
import { PageFrame } from '../ui/PageFrame.js';

// a data router, as the app's (the frame reads the matched routes' handles)
const html = (page: ReturnType<typeof createElement>) =>
  renderToStaticMarkup(
    createElement(QueryClientProvider, { client: new QueryClient() }, createElement(RouterProvider, { router: createMemoryRouter([{ path: '*', element: page }]) })),
  );

describe('the viewer\'s "no run at this address"', () => {
  test('sits under the masthead, as the other not-found pages do', () => {
    const page = html(createElement(RunNotFoundPage));
    expect(page).toContain('No run at this address');
    expect(page).toMatch(/<header[^>]*>.*Toppleworks.*<nav aria-label="main"/s);
    // the same frame the router gives the site-wide not-found page
    const masthead = (s: string) => s.match(/<header.*<\/header>/s)?.[0];
    expect(masthead(page)).toBeDefined();
    expect(masthead(page)).toBe(masthead(html(createElement(PageFrame, null, createElement(NotFound)))));
  });
});
