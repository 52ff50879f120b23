import express, { type Request, type Response, type Router } from 'express';
import { checkoutLineItems } from './api';
import { formatDate, formatMoney, type Billing, type ProrationBehavior } from './billing';
import { judgePayment, type PaymentForm } from './cards';
import { StripeFakeError } from './errors';
import type { CheckoutSession, PortalSession, Subscription } from './objects';
import type { FakeStore } from './store';

/**
 * The browser-facing pages Stripe would host: the payment page behind a Checkout Session's `url`,
 * the billing portal behind a portal session's `url`, and the hosted invoice page. Plain HTML
 * forms, no scripts, so they work under the strictest content security policy.
 */
export interface PageDependencies {
  store: FakeStore;
  billing: Billing;
  merchantName: string;
  portalProrationBehavior: ProrationBehavior;
  baseUrlOf: (req: Request) => string;
}

const PAGE_POLICY = "default-src 'none'; style-src 'unsafe-inline'; base-uri 'none'; frame-ancestors 'none'";

export function createPagesRouter(deps: PageDependencies): Router {
  const { store, billing } = deps;
  const router = express.Router();
  const form = express.urlencoded({ extended: false, limit: '20kb' });
  router.use((_req, res, next) => {
    res.setHeader('Content-Security-Policy', PAGE_POLICY);
    res.setHeader('Cache-Control', 'no-store');
    next();
  });

  // --- Hosted payment page --------------------------------------------------------------------
  router.get('/pay/:sessionId', (req, res) => {
    const session = store.checkoutSessions.get(req.params.sessionId);
    if (!session || session.status !== 'open') return sendClosedSession(res, session);
    sendPaymentPage(res, 200, session, {});
  });

  router.post('/pay/:sessionId', form, (req, res) => {
    const session = store.checkoutSessions.get(req.params.sessionId);
    if (session?.status === 'complete') return res.redirect(303, successUrl(session));
    if (!session || session.status !== 'open') return sendClosedSession(res, session);
    const fields = (req.body ?? {}) as PaymentForm;
    const outcome = judgePayment(fields, { emailNeeded: needsEmail(session), nowSeconds: store.now() });
    if (outcome.kind === 'invalid') return sendPaymentPage(res, 400, session, { fields, problems: outcome.problems });
    if (outcome.kind === 'declined') return sendPaymentPage(res, 402, session, { fields, declined: outcome.decline.message });
    billing.completeCheckout(session, { email: outcome.email, name: outcome.name }, { baseUrl: deps.baseUrlOf(req) });
    res.redirect(303, successUrl(session));
  });

  function sendPaymentPage(
    res: Response,
    status: number,
    session: CheckoutSession,
    state: { fields?: PaymentForm; problems?: Partial<Record<keyof PaymentForm, string>>; declined?: string },
  ) {
    const lines = checkoutLineItems(store, session);
    const recurring = lines[0]?.price.recurring;
    const every = recurring ? intervalText(recurring.interval, recurring.interval_count) : '';
    const total = formatMoney(session.amount_total, session.currency);
    const fields = state.fields ?? {};
    const problems = state.problems ?? {};
    const customer = session.customer ? store.customers.get(session.customer) : undefined;
    const payerEmail = session.customer_email ?? customer?.email ?? null;
    const field = (name: keyof PaymentForm, label: string, attributes: string, keep = true) => `
      <div class="field">
        <label for="${name}">${label}</label>
        <input id="${name}" name="${name}" ${attributes}${keep && fields[name] ? ` value="${escapeHtml(fields[name] as string)}"` : ''}${problems[name] ? ` aria-invalid="true" aria-describedby="${name}-problem"` : ''}>
        ${problems[name] ? `<p class="problem" id="${name}-problem">${escapeHtml(problems[name] as string)}</p>` : ''}
      </div>`;
    const body = `
      <h1>Subscribe to ${escapeHtml(deps.merchantName)}</h1>
      <table class="lines">
        <thead><tr><th scope="col">Item</th><th scope="col">Quantity</th><th scope="col" class="amount">Amount</th></tr></thead>
        <tbody>${lines
          .map(
            (line) => `<tr><td>${escapeHtml(line.description)}<br><small>${formatMoney(line.price.unit_amount, line.currency)} each ${every}</small></td>
              <td>${line.quantity}</td><td class="amount">${formatMoney(line.amount_total, line.currency)}</td></tr>`,
          )
          .join('')}</tbody>
        <tfoot><tr><th scope="row" colspan="2">Total due today</th><td class="amount" id="total">${total}</td></tr></tfoot>
      </table>
      <p class="then">Then ${total} ${every} until cancelled.</p>
      ${state.declined ? `<div class="alert" role="alert"><strong>Your card was declined.</strong> ${escapeHtml(state.declined === 'Your card was declined.' ? 'Try another card.' : state.declined)}</div>` : ''}
      <form method="post" action="/pay/${encodeURIComponent(session.id)}" novalidate>
        ${needsEmail(session) ? field('email', 'Email', 'type="email" autocomplete="email" required') : payerEmail ? `<p>Paying as <strong>${escapeHtml(payerEmail)}</strong></p>` : ''}
        ${field('card_number', 'Card number', 'inputmode="numeric" autocomplete="cc-number" placeholder="4242 4242 4242 4242" required', false)}
        <div class="row">
          ${field('card_expiry', 'Expiry (MM / YY)', 'autocomplete="cc-exp" placeholder="MM / YY" required')}
          ${field('card_cvc', 'CVC', 'inputmode="numeric" autocomplete="cc-csc" placeholder="123" required', false)}
        </div>
        ${field('cardholder_name', 'Name on card', 'autocomplete="cc-name" required')}
        <button type="submit">Pay ${total} and subscribe</button>
      </form>
      ${session.cancel_url ? `<p class="back"><a href="${escapeHtml(session.cancel_url)}">Cancel and go back</a></p>` : ''}
      <aside class="help">
        <h2>Test cards</h2>
        <p>4242 4242 4242 4242 pays. 4000 0000 0000 0002 is declined. 4000 0000 0000 9995 is declined for insufficient funds.
        Use any future expiry date and any three digits as the CVC.</p>
      </aside>`;
    sendPage(res, status, `Pay ${deps.merchantName} (test)`, body);
  }

  // --- Billing portal -------------------------------------------------------------------------
  router.get('/portal/:portalId', (req, res) => {
    const portal = store.portalSessions.get(req.params.portalId);
    if (!portal) return sendPage(res, 404, 'Not found', '<h1>This billing link is not known</h1><p>Open the billing portal again from the app.</p>');
    sendPortalPage(res, 200, portal, { notice: noticeFor(req.query.done) });
  });

  router.post('/portal/:portalId/subscriptions/:subscriptionId/:action', form, (req, res) => {
    const portal = store.portalSessions.get(req.params.portalId);
    const subscription = store.subscriptions.get(req.params.subscriptionId);
    if (!portal || !subscription || subscription.customer !== portal.customer) {
      return sendPage(res, 404, 'Not found', '<h1>This subscription is not part of this billing link</h1>');
    }
    const context = { baseUrl: deps.baseUrlOf(req) };
    try {
      if (req.params.action === 'quantity') {
        const raw = String(req.body?.quantity ?? '').trim();
        const quantity = /^\d+$/.test(raw) ? Number(raw) : NaN;
        if (!(quantity >= 1 && quantity <= 999_999)) {
          return sendPortalPage(res, 400, portal, { problem: 'Enter a whole number of seats, 1 or more.' });
        }
        billing.updateSubscription(
          subscription,
          { quantities: [{ itemId: subscription.items.data[0].id, quantity, label: 'quantity' }], prorationBehavior: deps.portalProrationBehavior },
          context,
        );
      } else if (req.params.action === 'cancel') {
        billing.updateSubscription(subscription, { cancelAtPeriodEnd: true }, context);
      } else if (req.params.action === 'resume') {
        billing.updateSubscription(subscription, { cancelAtPeriodEnd: false }, context);
      } else {
        return sendPage(res, 404, 'Not found', '<h1>Unknown action</h1>');
      }
    } catch (error) {
      if (error instanceof StripeFakeError) return sendPortalPage(res, 400, portal, { problem: error.message });
      throw error;
    }
    res.redirect(303, `/portal/${encodeURIComponent(portal.id)}?done=${encodeURIComponent(req.params.action)}`);
  });

  function sendPortalPage(res: Response, status: number, portal: PortalSession, state: { notice?: string; problem?: string }) {
    const customer = store.customers.get(portal.customer);
    const subscriptions = [...store.subscriptions.values()].filter((subscription) => subscription.customer === portal.customer).reverse();
    const invoices = [...store.invoices.values()].filter((invoice) => invoice.customer === portal.customer).reverse();
    const body = `
      <h1>${escapeHtml(deps.merchantName)} billing</h1>
      <p>Signed in as <strong>${escapeHtml(customer?.email ?? customer?.name ?? portal.customer)}</strong></p>
      ${state.notice ? `<div class="notice" role="status">${escapeHtml(state.notice)}</div>` : ''}
      ${state.problem ? `<div class="alert" role="alert">${escapeHtml(state.problem)}</div>` : ''}
      <h2>Subscriptions</h2>
      ${subscriptions.length === 0 ? '<p>No subscriptions yet.</p>' : subscriptions.map((subscription) => subscriptionSection(portal, subscription)).join('')}
      <h2>Invoices</h2>
      ${
        invoices.length === 0
          ? '<p>No invoices yet.</p>'
          : `<table class="lines"><thead><tr><th scope="col">Date</th><th scope="col">Number</th><th scope="col" class="amount">Amount</th><th scope="col">Status</th></tr></thead><tbody>${invoices
              .map(
                (invoice) => `<tr><td>${formatDate(invoice.created)}</td><td><a href="/invoices/${encodeURIComponent(invoice.id)}">${escapeHtml(invoice.number)}</a></td>
                  <td class="amount">${formatMoney(invoice.total, invoice.currency)}</td><td>${escapeHtml(invoice.status)}</td></tr>`,
              )
              .join('')}</tbody></table>`
      }
      ${portal.return_url ? `<p class="back"><a href="${escapeHtml(portal.return_url)}">Return to ${escapeHtml(deps.merchantName)}</a></p>` : ''}`;
    sendPage(res, status, `${deps.merchantName} billing (test)`, body);
  }

  function subscriptionSection(portal: PortalSession, subscription: Subscription): string {
    const item = subscription.items.data[0];
    const recurring = item.price.recurring;
    const every = recurring ? intervalText(recurring.interval, recurring.interval_count) : '';
    const action = (name: string) => `/portal/${encodeURIComponent(portal.id)}/subscriptions/${encodeURIComponent(subscription.id)}/${name}`;
    const heading = `<h3>${escapeHtml(billing.productName(item.price))}</h3>`;
    if (subscription.status === 'canceled') {
      return `<section class="subscription">${heading}<p>Ended on ${formatDate(subscription.ended_at ?? subscription.canceled_at ?? subscription.created)}.</p></section>`;
    }
    return `<section class="subscription">
      ${heading}
      <p>${item.quantity} ${item.quantity === 1 ? 'seat' : 'seats'} at ${formatMoney(item.price.unit_amount, item.price.currency)} each ${every}.
      Current period ${formatDate(item.current_period_start)} to ${formatDate(item.current_period_end)}.</p>
      <p class="status">${subscription.cancel_at_period_end ? `Cancels on ${formatDate(subscription.cancel_at ?? item.current_period_end)}.` : `Renews on ${formatDate(item.current_period_end)}.`}</p>
      <form method="post" action="${action('quantity')}" class="inline">
        <label for="quantity-${subscription.id}">Seats</label>
        <input id="quantity-${subscription.id}" name="quantity" type="number" min="1" step="1" value="${item.quantity}" required>
        <button type="submit">Update seats</button>
      </form>
      ${
        subscription.cancel_at_period_end
          ? `<form method="post" action="${action('resume')}" class="inline"><button type="submit">Keep subscription</button></form>`
          : `<form method="post" action="${action('cancel')}" class="inline"><button type="submit" class="secondary">Cancel at end of period</button></form>`
      }
    </section>`;
  }

  // --- Hosted invoice page --------------------------------------------------------------------
  router.get('/invoices/:invoiceId', (req, res) => {
    const invoice = store.invoices.get(req.params.invoiceId);
    if (!invoice) return sendPage(res, 404, 'Not found', '<h1>This invoice is not known</h1>');
    const body = `
      <h1>Receipt ${escapeHtml(invoice.number)}</h1>
      <p>${escapeHtml(deps.merchantName)} · ${formatDate(invoice.created)} · <strong>${invoice.status === 'paid' ? 'Paid' : escapeHtml(invoice.status)}</strong></p>
      <p>Billed to ${escapeHtml(invoice.customer_name ?? invoice.customer_email ?? invoice.customer)}${invoice.customer_email ? ` (${escapeHtml(invoice.customer_email)})` : ''}</p>
      <table class="lines">
        <thead><tr><th scope="col">Description</th><th scope="col">Period</th><th scope="col" class="amount">Amount</th></tr></thead>
        <tbody>${invoice.lines.data
          .map(
            (line) => `<tr><td>${escapeHtml(line.description)}</td><td>${formatDate(line.period.start)} to ${formatDate(line.period.end)}</td>
              <td class="amount">${formatMoney(line.amount, line.currency)}</td></tr>`,
          )
          .join('')}</tbody>
        <tfoot>
          <tr><th scope="row" colspan="2">Total</th><td class="amount">${formatMoney(invoice.total, invoice.currency)}</td></tr>
          <tr><th scope="row" colspan="2">Amount paid</th><td class="amount">${formatMoney(invoice.amount_paid, invoice.currency)}</td></tr>
        </tfoot>
      </table>`;
    sendPage(res, 200, `Receipt ${invoice.number} (test)`, body);
  });

  function sendClosedSession(res: Response, session: CheckoutSession | undefined) {
    if (!session) return sendPage(res, 404, 'Not found', '<h1>This payment link is not known</h1><p>Start the purchase again from the app.</p>');
    if (session.status === 'complete') {
      return sendPage(res, 200, 'Already paid', `<h1>This checkout is already paid</h1><p><a href="${escapeHtml(successUrl(session))}">Continue</a></p>`);
    }
    return sendPage(
      res,
      410,
      'Checkout expired',
      `<h1>This checkout has expired</h1><p>Start the purchase again from the app.</p>${
        session.cancel_url ? `<p class="back"><a href="${escapeHtml(session.cancel_url)}">Go back</a></p>` : ''
      }`,
    );
  }

  return router;
}

const needsEmail = (session: CheckoutSession) => !session.customer && !session.customer_email;

/** Stripe replaces the literal `{CHECKOUT_SESSION_ID}` in success_url when it redirects. */
export const successUrl = (session: CheckoutSession) => session.success_url.replaceAll('{CHECKOUT_SESSION_ID}', session.id);

function intervalText(interval: string, count: number): string {
  return count === 1 ? `per ${interval}` : `every ${count} ${interval}s`;
}

function noticeFor(done: unknown): string | undefined {
  const notices: Record<string, string> = {
    quantity: 'Seats updated.',
    cancel: 'Your subscription will end at the close of the current period.',
    resume: 'Your subscription will keep renewing.',
  };
  return typeof done === 'string' ? notices[done] : undefined;
}

export function escapeHtml(value: string): string {
  return value.replace(/[&<>"']/g, (character) => `&#${character.charCodeAt(0)};`);
}

const STYLE = `
  :root { color-scheme: light; font-family: system-ui, sans-serif; color: #1d2430; background: #eef1f5; }
  body { margin: 0; padding: 2rem 1rem; }
  main { max-width: 34rem; margin: 0 auto; background: #fff; border-radius: 8px; padding: 1.5rem 2rem; box-shadow: 0 1px 4px rgb(0 0 0 / 12%); }
  .test-banner { background: #fff4d6; border: 1px solid #d9a300; border-radius: 6px; padding: .6rem .8rem; font-size: .9rem; }
  h1 { font-size: 1.4rem; } h2 { font-size: 1.1rem; margin-top: 1.5rem; } h3 { font-size: 1rem; margin-bottom: .3rem; }
  table.lines { width: 100%; border-collapse: collapse; margin: 1rem 0; }
  .lines th, .lines td { text-align: left; padding: .4rem .3rem; border-bottom: 1px solid #dde2ea; vertical-align: top; }
  .lines .amount { text-align: right; white-space: nowrap; }
  .field { margin: .8rem 0; } .row { display: flex; gap: 1rem; } .row .field { flex: 1; }
  label { display: block; font-weight: 600; margin-bottom: .25rem; }
  input { width: 100%; box-sizing: border-box; padding: .5rem; font: inherit; border: 1px solid #8a94a6; border-radius: 4px; }
  input[aria-invalid="true"] { border-color: #b3261e; }
  .inline { display: flex; gap: .5rem; align-items: end; margin: .5rem 0; } .inline input { width: 6rem; } .inline label { margin: 0; align-self: center; }
  button { background: #1f4fa3; color: #fff; border: 0; border-radius: 4px; padding: .6rem 1rem; font: inherit; cursor: pointer; }
  button.secondary { background: #fff; color: #1f4fa3; border: 1px solid #1f4fa3; }
  .problem { color: #b3261e; margin: .25rem 0 0; font-size: .9rem; }
  .alert { background: #fde8e7; border: 1px solid #b3261e; border-radius: 6px; padding: .6rem .8rem; margin: 1rem 0; }
  .notice { background: #e6f4ea; border: 1px solid #2e7d32; border-radius: 6px; padding: .6rem .8rem; margin: 1rem 0; }
  .subscription { border-top: 1px solid #dde2ea; padding-top: .5rem; }
  .help { margin-top: 1.5rem; font-size: .9rem; color: #4a5568; }
  a { color: #1f4fa3; }
`;

function sendPage(res: Response, status: number, title: string, body: string): void {
  res
    .status(status)
    .type('html')
    .send(`<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(title)}</title>
<style>${STYLE}</style>
</head>
<body>
<main>
<p class="test-banner" role="note"><strong>Local test page.</strong> This is the development stand-in for the payment provider. No real card is charged and no real money moves.</p>
${body}
</main>
</body>
</html>`);
}
