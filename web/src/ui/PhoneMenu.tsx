import { useEffect, useId, useRef, useState } from 'react';
import { Link, NavLink, useLocation } from 'react-router';
import type { MeResponse } from '../api/contract.js';
import { LabSwitcher } from './LabSwitcher.js';
import { mainNav } from './mainNav.js';

/**
 * The signed-in masthead on a phone: the navigation row and the lab switcher do not fit beside the
 * mark, so they fold into one "Menu" button whose sheet drops below the masthead, with rows large
 * enough for a thumb. It closes on a choice, on Escape and on a tap outside. Hidden from `sm` up,
 * where the masthead shows them in its row.
 */
export function PhoneMenu({ me }: { me: MeResponse }) {
  const [open, setOpen] = useState(false);
  const button = useRef<HTMLButtonElement>(null);
  const sheetId = useId();
  const { pathname, search } = useLocation();
  // following a link (or Back) lands on another page: the sheet has done its work
  useEffect(() => setOpen(false), [pathname, search]);
  useEffect(() => {
    if (!open) return;
    const onKey = (e: KeyboardEvent) => {
      if (e.key !== 'Escape') return;
      setOpen(false);
      button.current?.focus();
    };
    document.addEventListener('keydown', onKey);
    return () => document.removeEventListener('keydown', onKey);
  }, [open]);

  return (
    <div className="sm:hidden">
      <button
        ref={button}
        type="button"
        aria-expanded={open}
        aria-controls={sheetId}
        onClick={() => setOpen((o) => !o)}
        className={`inline-flex items-center gap-2 rounded-md border px-3 py-1.5 text-sm font-medium ${open ? 'border-press/30 bg-press-tint text-press' : 'border-rule bg-sheet text-ink'}`}
      >
        <MenuMark open={open} />
        Menu
      </button>
      {open ? (
        <>
          {/* the page under the sheet dims and takes the tap that closes it */}
          <div aria-hidden="true" className="absolute inset-x-0 top-full z-20 h-screen bg-ink/25" onClick={() => setOpen(false)} />
          <div id={sheetId} className="absolute inset-x-0 top-full z-30 border-b border-rule bg-sheet px-4 pb-5 pt-3 shadow-[0_12px_24px_-12px_rgb(35_33_29/0.35)]">
            <nav aria-label="main" className="flex flex-col">
              {mainNav(me).map((item) => (
                <NavLink
                  key={item.to}
                  to={item.to}
                  className={({ isActive }) =>
                    `rounded-md px-3 py-3 text-base no-underline ${isActive ? 'bg-press-tint font-medium text-press' : 'text-ink hover:bg-paper'}`
                  }
                >
                  {item.label}
                </NavLink>
              ))}
            </nav>
            <div className="mt-3 border-t border-rule-soft px-3 pt-4">
              <LabSwitcher me={me} wide />
            </div>
            <Link to="/account" className="mt-4 flex items-baseline justify-between gap-3 rounded-md px-3 py-2 text-sm text-ink no-underline hover:bg-paper">
              <span className="min-w-0 truncate">
                Signed in as <span className="font-medium">{me.user.name}</span>
              </span>
              <span className="shrink-0 text-press">Account</span>
            </Link>
          </div>
        </>
      ) : null}
    </div>
  );
}

/** Three bars that turn into a cross while the sheet is open. */
function MenuMark({ open }: { open: boolean }) {
  return (
    <svg aria-hidden="true" viewBox="0 0 16 16" className="h-4 w-4" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round">
      {open ? <path d="M3.5 3.5l9 9M12.5 3.5l-9 9" /> : <path d="M2.5 4h11M2.5 8h11M2.5 12h11" />}
    </svg>
  );
}
