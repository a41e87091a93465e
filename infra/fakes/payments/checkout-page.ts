import type { StoredSession } from './store.js';

/** The fake's hosted checkout page: amount, items, a card field, Pay and Cancel. Plain HTML, no script. */

const escape = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);

/** Stripe amounts are in the currency's minor unit; Intl knows how many decimals each currency has. */
export function formatAmount(minor: number, currency: string): string {
  const fmt = new Intl.NumberFormat('en-US', { style: 'currency', currency: currency.toUpperCase() });
  const digits = fmt.resolvedOptions().maximumFractionDigits ?? 2;
  return fmt.format(minor / 10 ** digits);
}

const STYLE = `
  body { margin: 0; background: #f4f1ea; color: #1f2328; font: 16px/1.5 system-ui, sans-serif; }
  main { max-width: 28rem; margin: 4rem auto; background: #fffdf8; border: 1px solid #d9d3c5; padding: 2rem 2.25rem; }
  h1 { font-size: 1.1rem; font-weight: 600; margin: 0 0 1.5rem; letter-spacing: .02em; }
  .total { font-size: 2rem; font-variant-numeric: tabular-nums; margin: 0 0 .25rem; }
  table { width: 100%; border-collapse: collapse; margin: 1rem 0 1.5rem; font-size: .95rem; }
  td { padding: .35rem 0; border-bottom: 1px solid #ebe6da; } td.n { text-align: right; font-variant-numeric: tabular-nums; }
  label { display: block; font-size: .85rem; margin-bottom: .35rem; }
  input { width: 100%; box-sizing: border-box; font: 1.05rem ui-monospace, monospace; padding: .6rem .7rem; border: 1px solid #b9b2a2; background: #fff; }
  .actions { display: flex; gap: .75rem; margin-top: 1.25rem; }
  button { font: inherit; padding: .6rem 1.2rem; border: 1px solid #1f2328; cursor: pointer; }
  .pay { background: #1f2328; color: #fffdf8; flex: 1; } .cancel { background: transparent; }
  .alert { border-left: 3px solid #b3261e; background: #fbeeed; padding: .6rem .8rem; margin: 0 0 1rem; }
  .ok { border-left-color: #2e6b3a; background: #edf5ee; }
  .hint { color: #6b665c; font-size: .8rem; margin-top: 1.25rem; }`;

export function checkoutPage(stored: StoredSession, notice?: { kind: 'error' | 'ok'; text: string }): string {
  const s = stored.session;
  const rows = stored.lineItems
    .map((li) => `<tr><td>${escape(li.description)} × ${li.quantity}</td><td class="n">${formatAmount(li.amount_total, li.currency)}</td></tr>`)
    .join('');
  const alert = notice ? `<p class="alert${notice.kind === 'ok' ? ' ok' : ''}" role="alert">${escape(notice.text)}</p>` : '';
  const body =
    s.status === 'open'
      ? `<form method="post" action="/checkout/${s.id}/pay">
      <label for="card">Card number</label>
      <input id="card" name="card" inputmode="numeric" autocomplete="cc-number" placeholder="4242 4242 4242 4242" required>
      <div class="actions"><button class="pay" type="submit">Pay ${formatAmount(s.amount_total, s.currency)}</button>
      <button class="cancel" type="submit" formaction="/checkout/${s.id}/cancel" formnovalidate>Cancel</button></div>
    </form>
    <p class="hint">Local test checkout. 4242 4242 4242 4242 pays; 4000 0000 0000 0002 is declined.</p>`
      : `<p class="alert ok">This checkout is ${s.status === 'complete' ? 'paid' : 'expired'}.</p>` +
        (s.status === 'complete' ? `<p><a href="${escape(s.success_url.replaceAll('{CHECKOUT_SESSION_ID}', s.id))}">Continue</a></p>` : '');
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>Checkout · ${formatAmount(s.amount_total, s.currency)}</title><style>${STYLE}</style></head>
<body><main><h1>Toppleworks checkout</h1>${alert}<p class="total">${formatAmount(s.amount_total, s.currency)}</p>
<table>${rows}</table>${body}</main></body></html>`;
}

export function messagePage(title: string, text: string): string {
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><title>${escape(title)}</title><style>${STYLE}</style></head>
<body><main><h1>${escape(title)}</h1><p>${escape(text)}</p></main></body></html>`;
}
