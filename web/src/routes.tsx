import type { ComponentType } from 'react';
import { createBrowserRouter } from 'react-router';
import { PageFrame } from './ui/PageFrame.js';
import { RequireSignIn } from './auth/RequireSignIn.js';
import { Landing } from './pages/Landing.js';
import { SignIn } from './pages/SignIn.js';
import { SignUp } from './pages/SignUp.js';
import { VerifyEmail } from './pages/VerifyEmail.js';
import { ForgotPassword } from './pages/ForgotPassword.js';
import { ResetPassword } from './pages/ResetPassword.js';
import { InvitationPage } from './pages/InvitationPage.js';
import { FiguresIndex } from './pages/FiguresIndex.js';
import { FigureReader } from './pages/FigureReader.js';
import { NotFound } from './pages/NotFound.js';
import { RouteError } from './pages/RouteError.js';

/**
 * Signed-in and development pages load on first visit, so a reader opening a figure link downloads
 * only the public pages.
 */
const lazyPage = <M,>(load: () => Promise<M>, pick: (m: M) => ComponentType) => ({
  lazy: async () => ({ Component: pick(await load()) }),
});

/**
 * What shows while a lazy page loads on a first visit. React Router only uses a fallback that is an
 * element (null counts as none: it warns in the console and drops the page frame), so these are
 * empty elements: the viewer's dark ground, and inside the paper frame an empty main area, so the
 * header is there at once.
 */
const viewerLoading = <div aria-busy="true" className="min-h-screen bg-night" />;
const pageLoading = <div aria-busy="true" className="min-h-[50vh]" />;

/** A route handle: the page is laid out for phones too, not only down to a tablet's 768 px (web/CONTEXT.md "screen widths"). */
const PHONES = { fitsPhones: true };

/** The route table of the contract; everything behind RequireSignIn needs a session. */
export function createRouter() {
  return createBrowserRouter([
    // the deep-zoom reader is full-bleed on its dark ground, outside the paper frame; OpenSeadragon loads with it
    {
      errorElement: <RouteError />,
      element: <RequireSignIn />,
      hydrateFallbackElement: viewerLoading,
      children: [{ path: '/runs/:id/view', ...lazyPage(() => import('./viewer/ViewerPage.js'), (m) => m.ViewerPage) }],
    },
    {
      element: <PageFrame />,
      children: [
        {
          errorElement: <RouteError />,
          hydrateFallbackElement: pageLoading,
          children: [
            // every page a signed-out reader reaches fits a phone (PageFrame, styles.css): readers follow a
            // paper's link on any screen, and from a figure go on to the index, the front page or signing in
            { path: '/', element: <Landing />, handle: PHONES },
            { path: '/sign-in', element: <SignIn />, handle: PHONES },
            { path: '/sign-up', element: <SignUp />, handle: PHONES },
            { path: '/verify-email', element: <VerifyEmail />, handle: PHONES },
            { path: '/forgot-password', element: <ForgotPassword />, handle: PHONES },
            { path: '/reset-password', element: <ResetPassword />, handle: PHONES },
            { path: '/invitations/:token', element: <InvitationPage />, handle: PHONES },
            { path: '/figures', element: <FiguresIndex />, handle: PHONES },
            { path: '/f/:slug', element: <FigureReader />, handle: PHONES },
            { path: '/f/:slug/v/:version', element: <FigureReader />, handle: PHONES },
            { path: '/dev/outbox', ...lazyPage(() => import('./pages/DevOutbox.js'), (m) => m.DevOutbox) },
            {
              element: <RequireSignIn />,
              children: [
                // a researcher checks a long run from a phone: the runs and a run's page fit one too
                { path: '/runs', ...lazyPage(() => import('./pages/RunsList.js'), (m) => m.RunsList), handle: PHONES },
                { path: '/runs/new', ...lazyPage(() => import('./pages/NewRunPage.js'), (m) => m.NewRunPage) },
                { path: '/runs/:id', ...lazyPage(() => import('./pages/RunPage.js'), (m) => m.RunPage), handle: PHONES },
                { path: '/series/:id', ...lazyPage(() => import('./pages/SeriesPage.js'), (m) => m.SeriesPage) },
                { path: '/lab', ...lazyPage(() => import('./pages/LabPage.js'), (m) => m.LabPage) },
                { path: '/lab/figures', ...lazyPage(() => import('./pages/figures/LabFigures.js'), (m) => m.LabFigures) },
                { path: '/lab/figures/:slug', ...lazyPage(() => import('./pages/figures/FigurePage.js'), (m) => m.FigurePage) },
                { path: '/lab/figures/:slug/edit', ...lazyPage(() => import('./pages/figures/ComposePage.js'), (m) => m.ComposePage) },
                { path: '/figures/new', ...lazyPage(() => import('./pages/figures/ComposePage.js'), (m) => m.ComposePage) },
                { path: '/lab/credits', ...lazyPage(() => import('./pages/credits/CreditsPage.js'), (m) => m.CreditsPage) },
                { path: '/lab/credits/receipts/:id', ...lazyPage(() => import('./pages/credits/ReceiptPage.js'), (m) => m.ReceiptPage) },
                { path: '/account', ...lazyPage(() => import('./pages/AccountPage.js'), (m) => m.AccountPage) },
                { path: '/admin', ...lazyPage(() => import('./pages/admin/AdminConsole.js'), (m) => m.AdminConsole) },
              ],
            },
            { path: '*', element: <NotFound />, handle: PHONES },
          ],
        },
      ],
    },
  ]);
}
