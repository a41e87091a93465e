import type { ReactNode } from 'react';
import { Link, NavLink, Outlet, useMatches } from 'react-router';
import { useMe } from '../api/queries.js';
import { buttonClass } from './Button.js';
import { LabSwitcher } from './LabSwitcher.js';
import { mainNav } from './mainNav.js';
import { PhoneMenu } from './PhoneMenu.js';

/**
 * The paper every page sits on: masthead with navigation, active lab and person, then the page (the
 * route's, or `children` for a page drawn outside the frame's routes, such as the viewer's not-found).
 */
export function PageFrame({ children }: { children?: ReactNode }) {
  // a route whose handle says it fits phones lifts the page's tablet minimum width (styles.css)
  const fitsPhones = useMatches().some((m) => (m.handle as { fitsPhones?: boolean } | undefined)?.fitsPhones === true);
  return (
    <div className="flex min-h-screen flex-col" data-fits-phones={fitsPhones ? '' : undefined}>
      <Masthead />
      <main className="mx-auto w-full max-w-7xl flex-1 px-4 pb-20 pt-10 sm:px-8">
        {children ?? <Outlet />}
      </main>
      <footer className="border-t border-rule-soft py-6 text-center text-xs text-ink-faint">
        Toppleworks — exact sandpiles, printed to size
      </footer>
    </div>
  );
}

function Masthead() {
  const me = useMe();
  const signedIn = me.data ?? null;
  return (
    // relative: the phone's menu sheet hangs from the masthead's lower edge
    <header className="relative border-b border-rule bg-sheet/80 backdrop-blur">
      <div className="mx-auto flex h-16 max-w-7xl items-center gap-3 px-4 sm:gap-8 sm:px-8">
        <Link to="/" className="flex items-center gap-2.5 text-ink no-underline" aria-label="Toppleworks">
          <Wordmark />
          {/* signed in, the navigation and lab switcher need a tablet's width: the word waits for a laptop's,
              except on a phone, where they fold into the menu and leave the word its room */}
          <span className={`hidden text-lg font-semibold tracking-tight ${signedIn ? 'max-sm:inline lg:inline' : 'sm:inline'}`}>Toppleworks</span>
        </Link>
        <nav aria-label="main" className={`flex items-center text-sm sm:gap-1 ${signedIn ? 'max-sm:hidden' : ''}`}>
          {mainNav(signedIn).map((item) => (
            <NavItem key={item.to} to={item.to}>
              {item.label}
            </NavItem>
          ))}
        </nav>
        <div className="ml-auto flex items-center gap-3 sm:gap-4">
          {me.isPending ? null : signedIn ? (
            <>
              <LabSwitcher me={signedIn} />
              <PhoneMenu me={signedIn} />
              <Link to="/account" className="flex items-center gap-2 text-sm text-ink no-underline hover:text-press" title="Your account">
                <Initials name={signedIn.user.name} />
                <span className="hidden max-w-40 truncate lg:inline" data-testid="signed-in-name">{signedIn.user.name}</span>
              </Link>
            </>
          ) : (
            <>
              <Link to="/sign-in" className="text-sm text-ink no-underline hover:text-press">
                Sign in
              </Link>
              <Link to="/sign-up" className={buttonClass('primary', 'sm')}>
                Create account
              </Link>
            </>
          )}
        </div>
      </div>
    </header>
  );
}

function NavItem({ to, children }: { to: string; children: ReactNode }) {
  return (
    <NavLink
      to={to}
      className={({ isActive }) =>
        `rounded-md px-2 py-1.5 no-underline sm:px-3 ${isActive ? 'bg-press-tint font-medium text-press' : 'text-ink-soft hover:bg-paper hover:text-ink'}`
      }
    >
      {children}
    </NavLink>
  );
}

function Initials({ name }: { name: string }) {
  const letters = name
    .split(/\s+/)
    .filter(Boolean)
    .slice(0, 2)
    .map((w) => w[0]!.toUpperCase())
    .join('');
  return (
    <span aria-hidden="true" className="flex h-8 w-8 items-center justify-center rounded-full bg-press-tint text-xs font-semibold text-press">
      {letters || '?'}
    </span>
  );
}

/** Three stacked cells of a pile, as a tiny press mark. */
function Wordmark() {
  return (
    <svg aria-hidden="true" viewBox="0 0 24 24" className="h-7 w-7">
      <rect x="9" y="2" width="6" height="6" rx="1" className="fill-press" />
      <rect x="3" y="9" width="6" height="6" rx="1" className="fill-press/70" />
      <rect x="9" y="9" width="6" height="6" rx="1" className="fill-stamp" />
      <rect x="15" y="9" width="6" height="6" rx="1" className="fill-press/70" />
      <rect x="9" y="16" width="6" height="6" rx="1" className="fill-press" />
    </svg>
  );
}

/** Title block of a page: small overline, heading, one-line lede, actions at the right. */
export function PageHeading({ overline, title, lede, actions }: { overline?: ReactNode; title: ReactNode; lede?: ReactNode; actions?: ReactNode }) {
  return (
    <div className="mb-8 flex flex-wrap items-end justify-between gap-x-8 gap-y-4">
      <DocumentTitle title={title} />
      <div className="min-w-0">
        {overline ? <p className="mb-1 text-xs font-semibold uppercase tracking-[0.14em] text-ink-faint">{overline}</p> : null}
        <h1 className="text-2xl font-semibold tracking-tight text-ink sm:text-3xl">{title}</h1>
        {lede ? <p className="mt-2 max-w-2xl text-base text-ink-soft">{lede}</p> : null}
      </div>
      {actions ? <div className="flex shrink-0 gap-3">{actions}</div> : null}
    </div>
  );
}

/** Narrow centred sheet for sign-in and other single-form pages. */
export function FormSheet({ title, lede, children, footer }: { title: ReactNode; lede?: ReactNode; children: ReactNode; footer?: ReactNode }) {
  return (
    <div className="mx-auto mt-6 w-full max-w-md">
      <DocumentTitle title={title} />
      <div className="rounded-xl border border-rule bg-sheet px-5 py-6 shadow-[0_1px_0_rgba(0,0,0,0.03)] sm:px-9 sm:py-8">
        <h1 className="text-2xl font-semibold tracking-tight">{title}</h1>
        {lede ? <p className="mt-2 text-sm text-ink-soft">{lede}</p> : null}
        <div className="mt-6">{children}</div>
      </div>
      {footer ? <div className="mt-5 text-center text-sm text-ink-soft">{footer}</div> : null}
    </div>
  );
}

/** React 19 hoists <title> into the head; tabs and history then name the page. */
function DocumentTitle({ title }: { title: ReactNode }) {
  return typeof title === 'string' ? <title>{`${title} · Toppleworks`}</title> : null;
}
