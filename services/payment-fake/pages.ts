// The fake's own hosted pages (card form, onboarding): plain HTML, clearly marked as local test pages,
// standing in for the provider's hosted pages in development and tests only.
import { formatAmount } from "./api";
import { TEST_CARDS_HINT } from "./cards";
import type { ProviderObject } from "./state";

const esc = (s: unknown) => String(s ?? "").replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c]!);

const STYLE = `
body{font:16px/1.5 system-ui,sans-serif;margin:0;background:#f4f4f0;color:#222}
main{max-width:28rem;margin:2rem auto;background:#fff;border:1px solid #ccc;border-radius:6px;padding:1.5rem}
.banner{background:#fde68a;color:#3b2f00;text-align:center;padding:.5rem;font-weight:600}
label{display:block;margin-top:.8rem;font-weight:600}
input{width:100%;box-sizing:border-box;padding:.5rem;font:inherit;border:1px solid #888;border-radius:4px}
.row{display:flex;gap:1rem}.row>div{flex:1}
button{margin-top:1.2rem;width:100%;padding:.7rem;font:inherit;font-weight:600;border:0;border-radius:4px;background:#1f4e79;color:#fff;cursor:pointer}
button.secondary{background:#e5e5e5;color:#222}
.error{background:#fee2e2;color:#7f1d1d;border:1px solid #fca5a5;padding:.6rem;border-radius:4px}
.hint{font-size:.85rem;color:#555}table{width:100%;border-collapse:collapse}td{padding:.2rem 0}td.num{text-align:right}`;

export function page(title: string, body: string, opts: { refreshTo?: string | null } = {}) {
  const refresh = opts.refreshTo ? `<meta http-equiv="refresh" content="1;url=${esc(opts.refreshTo)}">` : "";
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width,initial-scale=1">
<title>${esc(title)} (local test)</title>${refresh}<style>${STYLE}</style></head>
<body><div class="banner" role="note">Local test page of the payment fake: no real money moves.</div>
<main>${body}</main></body></html>`;
}

export function htmlResponse(html: string, status = 200) {
  return new Response(html, { status, headers: { "content-type": "text/html; charset=utf-8", "cache-control": "no-store" } });
}

export function redirect(url: string) {
  return new Response(null, { status: 303, headers: { location: url, "cache-control": "no-store" } });
}

export function cardPage(session: ProviderObject, lineItems: ProviderObject[], opts: { error?: string; values?: Record<string, string> } = {}) {
  const currency = String(session.currency);
  const total = formatAmount(Number(session.amount_total), currency);
  const v = opts.values ?? {};
  const rows = lineItems
    .map(
      (li) =>
        `<tr><td>${esc(li.description)}${Number(li.quantity) > 1 ? ` × ${esc(li.quantity)}` : ""}</td><td class="num">${esc(formatAmount(Number(li.amount_total), currency))}</td></tr>`,
    )
    .join("");
  const cancel =
    typeof session.cancel_url === "string"
      ? `<p><a href="${esc(String(session.cancel_url).replaceAll("{CHECKOUT_SESSION_ID}", session.id))}">Cancel and go back</a></p>`
      : "";
  const hints = TEST_CARDS_HINT.map(([n, what]) => `<li><code>${n}</code> ${what}</li>`).join("");
  return page(
    "Pay",
    `<h1>Local test payment</h1>
<table aria-label="Order summary">${rows}<tr><td><strong>Total</strong></td><td class="num"><strong>${esc(total)}</strong></td></tr></table>
${opts.error ? `<p class="error" role="alert">${esc(opts.error)}</p>` : ""}
<form method="post" action="/pay/${esc(session.id)}">
<label for="card">Card number</label>
<input id="card" name="card" inputmode="numeric" autocomplete="cc-number" required value="${esc(v.card)}" placeholder="4242 4242 4242 4242">
<div class="row"><div><label for="exp">Expiry (MM/YY)</label>
<input id="exp" name="exp" autocomplete="cc-exp" required value="${esc(v.exp)}" placeholder="12/34"></div>
<div><label for="cvc">CVC</label>
<input id="cvc" name="cvc" inputmode="numeric" autocomplete="cc-csc" required value="${esc(v.cvc)}" placeholder="123"></div></div>
<label for="name">Name on card</label>
<input id="name" name="name" autocomplete="cc-name" value="${esc(v.name)}">
<button type="submit">Pay ${esc(total)}</button>
</form>
${cancel}
<p class="hint">Test cards:</p><ul class="hint">${hints}</ul>`,
  );
}

export function paidPage(successUrl: string | null) {
  return page(
    "Already paid",
    `<h1>This payment is already complete</h1>
<p role="status">Nothing more was charged.</p>${successUrl ? `<p><a href="${esc(successUrl)}">Continue</a></p>` : ""}`,
    { refreshTo: successUrl },
  );
}

export function expiredPage(cancelUrl: string | null) {
  return page(
    "Expired",
    `<h1>This checkout has expired</h1>
<p role="status">No payment was taken.</p>${cancelUrl ? `<p><a href="${esc(cancelUrl)}">Go back</a></p>` : ""}`,
  );
}

export function notFoundPage(what: string) {
  return page("Not found", `<h1>Not found</h1><p>No such ${esc(what)} in the local payment fake.</p>`);
}

export function onboardingPage(token: string, account: ProviderObject) {
  return page(
    "Onboarding",
    `<h1>Local test onboarding</h1>
<p>Payout account <code>${esc(account.id)}</code>${account.email ? ` for ${esc(account.email)}` : ""}.</p>
<p class="hint">This stands in for the provider's identity and bank-account forms. Completing it enables
charges and payouts for the account.</p>
<form method="post" action="/connect/onboard/${esc(token)}">
<button type="submit" name="action" value="complete">Complete onboarding</button>
<button type="submit" name="action" value="leave" class="secondary">Leave without finishing</button>
</form>`,
  );
}

/** The hosted bank-transfer instructions, with a local-test form that makes a transfer "arrive". */
export function transferPage(pi: ProviderObject, reference: string, error?: string) {
  const currency = String(pi.currency);
  const display = (pi.next_action as { display_bank_transfer_instructions?: Record<string, unknown> } | null)?.display_bank_transfer_instructions;
  const iban = (display?.financial_addresses as { iban?: Record<string, string> }[] | undefined)?.[0]?.iban;
  const remaining = Number(display?.amount_remaining ?? 0);
  const status =
    pi.status === "succeeded"
      ? '<p role="status">Paid in full.</p>'
      : pi.status === "canceled"
        ? '<p role="status">This payment was cancelled; money that arrives now stays in the cash balance.</p>'
        : `<p role="status">Still to transfer: <strong>${esc(formatAmount(remaining, currency))}</strong> of ${esc(formatAmount(Number(pi.amount), currency))}.</p>`;
  const rows = iban
    ? `<table aria-label="Bank details"><tr><td>Account holder</td><td>${esc(iban.account_holder_name)}</td></tr>
<tr><td>IBAN</td><td><code>${esc(iban.iban)}</code></td></tr><tr><td>BIC</td><td><code>${esc(iban.bic)}</code></td></tr>
<tr><td>Reference</td><td><code>${esc(reference)}</code></td></tr></table>`
    : `<p>Reference <code>${esc(reference)}</code></p>`;
  return page(
    "Bank transfer",
    `<h1>Local test bank transfer</h1>${status}${rows}
${error ? `<p class="error" role="alert">${esc(error)}</p>` : ""}
<form method="post" action="/transfer/${esc(pi.id)}">
<label for="amount">Simulate an incoming transfer of (${esc(currency.toUpperCase())})</label>
<input id="amount" name="amount" inputmode="decimal" required value="${esc((remaining / 100).toFixed(2))}">
<label for="reference">With the reference</label>
<input id="reference" name="reference" value="${esc(reference)}">
<button type="submit">Receive the transfer</button>
</form>
<p class="hint">Any amount: less than owed is a partial transfer, more leaves the excess in the customer's cash balance.</p>`,
  );
}
