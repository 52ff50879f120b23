import crypto from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import Stripe from 'stripe';
import { TestAgent, signedIn } from '../helpers/agent';
import { createTestApp } from '../helpers/app';
import { createUser, uniqueEmail } from '../helpers/factory';
import { WEBHOOK_SECRET, eventually, payCheckout, startBillingStack, type BillingStack } from '../helpers/billing';
import { TEST_CARD_DECLINED, submitPaymentForm } from '../../server/fakes/stripe/test-support';
import { ensureSeatPrices, SEAT_PRICES } from '../../server/services/stripe';
import { hasSeat } from '../../server/services/seats';

let stack: BillingStack;
const knex = () => stack.server.knex;
const app = () => stack.server.app;

beforeAll(async () => {
  stack = await startBillingStack();
});
afterAll(async () => {
  await stack?.close();
});

interface SignedUpCompany {
  agent: TestAgent;
  companyId: string;
  adminEmail: string;
  checkoutUrl: string;
}

async function signUp(seats: number, interval: 'month' | 'year' = 'month', companyName = `Hollowmere Stack Testing ${crypto.randomBytes(2).toString('hex')}`): Promise<SignedUpCompany> {
  const agent = new TestAgent(app());
  const adminEmail = uniqueEmail('founder');
  const res = await agent.post('/api/signup', { companyName, adminName: 'Ines Calloway-Brandt', email: adminEmail, password: 'a-long-founder-password', seats, interval });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  await agent.csrfToken(true);
  return { agent, companyId: res.body.me.activeCompanyId, adminEmail, checkoutUrl: res.body.checkoutUrl };
}

const billing = async (agent: TestAgent) => (await agent.get('/api/billing').expect(200)).body;
const mirror = (companyId: string) => knex()('subscriptions').where({ company_id: companyId }).first();

/** A company that has paid for `seats` and whose webhooks have landed. */
async function paidCompany(seats: number, interval: 'month' | 'year' = 'month') {
  const company = await signUp(seats, interval);
  await payCheckout(company.checkoutUrl);
  await stack.drain();
  const summary = await eventually(() => billing(company.agent), (b) => b.subscription?.status === 'active');
  expect(summary.seats.total).toBe(seats);
  const row = await mirror(company.companyId);
  return { ...company, subscriptionId: row.stripe_subscription_id as string };
}

/** Members added straight to the database with a seat status, for seat arithmetic. */
async function addMembers(companyId: string, count: number, seat: 'assigned' | 'queued' | 'none') {
  const ids: string[] = [];
  for (let i = 0; i < count; i++) {
    const user = await createUser(knex(), { companyId, roles: ['crew'], name: `Crew ${seat} ${i + 1}` });
    await knex()('memberships').where({ user_id: user.id, company_id: companyId }).update({
      seat_status: seat,
      seat_assigned_at: seat === 'assigned' ? new Date(Date.now() - (count - i) * 1000) : null,
      queued_at: seat === 'queued' ? new Date(Date.now() - (count - i) * 1000) : null,
    });
    ids.push(user.id);
  }
  return ids;
}

const signed = (payload: string, secret = WEBHOOK_SECRET) => Stripe.webhooks.generateTestHeaderString({ payload, secret });

describe('seat prices', () => {
  it('creates the monthly and yearly per-seat prices once, however often and from however many clients', async () => {
    const first = await new TestAgent(app()).get('/api/billing/plans').expect(200);
    expect(first.body.plans.map((p: { interval: string; unitAmount: number }) => [p.interval, p.unitAmount])).toEqual([
      ['month', SEAT_PRICES.month.unitAmount],
      ['year', SEAT_PRICES.year.unitAmount],
    ]);
    // A second process (a fresh client) finds the same prices by lookup key instead of adding more.
    const other = new Stripe('sk_test_another_process', { host: '127.0.0.1', port: stack.fake.port, protocol: 'http' });
    const again = await ensureSeatPrices(other);
    expect(again.month.priceId).toBe((await ensureSeatPrices(stack.stripe)).month.priceId);
    const prices = await stack.stripe.prices.list({ lookup_keys: [SEAT_PRICES.month.lookupKey, SEAT_PRICES.year.lookupKey], limit: 10 });
    expect(prices.data).toHaveLength(2);
    expect(prices.data.every((p) => p.recurring && p.product === 'plumewright-crew-seat')).toBe(true);
  });
});

describe('sign-up and checkout', () => {
  it('lists every bad field of a sign-up and creates nothing', async () => {
    const before = await knex()('companies').count<{ count: number }[]>('* as count');
    const res = await new TestAgent(app()).post('/api/signup', { companyName: 'X', adminName: '', email: 'nope', password: 'short', seats: 0, interval: 'weekly' });
    expect(res.status).toBe(400);
    expect(res.body.error.fields.map((f: { field: string }) => f.field).sort()).toEqual(['adminName', 'companyName', 'email', 'interval', 'password', 'seats']);
    for (const f of res.body.error.fields) expect(f.message.startsWith(`${f.field}:`)).toBe(true);
    expect(await knex()('companies').count<{ count: number }[]>('* as count')).toEqual(before);
  });

  it('signs a company up, pays on the payment page, and shows the seats once the webhook lands', async () => {
    const company = await signUp(5, 'month', 'Wrenfield Emission Services');
    expect(company.checkoutUrl).toMatch(new RegExp(`^${stack.fake.url}/pay/cs_`));
    const me = await company.agent.get('/api/auth/me').expect(200);
    expect(me.body.memberships[0]).toMatchObject({ companyName: 'Wrenfield Emission Services', roles: ['admin', 'manager'] });
    const unpaid = await billing(company.agent);
    expect(unpaid).toEqual({ seats: { total: 0, used: 0, queued: 0 }, subscription: null });

    const back = await payCheckout(company.checkoutUrl);
    const sessionId = new URL(back).searchParams.get('session_id')!;
    expect(back).toBe(`${stack.server.url}/billing/return?session_id=${sessionId}`);
    const status = await company.agent.get(`/api/billing/checkout/${sessionId}`).expect(200);
    expect(status.body).toEqual({ status: 'complete', paymentStatus: 'paid' });

    await stack.drain();
    const paid = await eventually(() => billing(company.agent), (b) => b.subscription?.status === 'active');
    expect(paid.seats).toEqual({ total: 5, used: 0, queued: 0 });
    expect(paid.subscription).toMatchObject({ status: 'active', interval: 'month', quantity: 5, cancelAtPeriodEnd: false, inGoodStanding: true });
    expect(paid.subscription.plan).toMatchObject({ interval: 'month', unitAmount: 1800, currency: 'usd' });
    expect(new Date(paid.subscription.currentPeriodEnd).getTime()).toBeGreaterThan(Date.now() + 27 * 86_400_000);

    // Another company's admin cannot ask about this checkout.
    const other = await signUp(1);
    expect((await other.agent.get(`/api/billing/checkout/${sessionId}`)).status).toBe(404);
  });

  it('sends the payment receipt to every admin once the invoice is paid, through the outbox', async () => {
    const company = await signUp(3, 'year');
    // A second admin, and one whose account is disabled (who gets nothing).
    const coAdmin = await createUser(knex(), { companyId: company.companyId, roles: ['admin'] });
    const disabled = await createUser(knex(), { companyId: company.companyId, roles: ['admin'] });
    await knex()('users').where({ id: disabled.id }).update({ disabled_at: knex().fn.now() });
    await payCheckout(company.checkoutUrl);
    await stack.drain();
    const { waitForMail } = await import('../helpers/mail');
    for (const to of [company.adminEmail, coAdmin.email]) {
      const mail = await waitForMail(to, { subject: /Payment received/ });
      expect(mail.subject).toContain('$540.00');
      expect(mail.text).toMatch(/paid up to/);
    }
    const invoice = await knex()('stripe_invoices').where({ company_id: company.companyId }).first();
    const receipts = await knex()('email_log').where({ kind: 'receipt', company_id: company.companyId }).orderBy('to_address');
    expect(receipts.map((r) => r.to_address)).toEqual([company.adminEmail, coAdmin.email].sort());
    for (const r of receipts) {
      expect(r).toMatchObject({ source: 'outbox', status: 'sent', attempts: 1, last_error: null });
      expect(r.subject).toContain(invoice.number);
    }
  });

  it('leaves nothing half-made when the payment service is down during sign-up', async () => {
    const closed = await createTestApp({}, { STRIPE_API_URL: 'http://127.0.0.1:9', STRIPE_WEBHOOK_SECRET: WEBHOOK_SECRET, STRIPE_SECRET_KEY: 'sk_test_nowhere' });
    try {
      const email = uniqueEmail('down');
      const res = await new TestAgent(closed.app).post('/api/signup', { companyName: 'Dunmore Flue Testing', adminName: 'Ola Venn', email, password: 'a-long-password-here', seats: 2, interval: 'month' });
      expect(res.status).toBe(503);
      expect(res.body.error.code).toBe('payment_unavailable');
      expect(await closed.knex('users').where({ email }).first()).toBeUndefined();
      expect(await closed.knex('companies').where({ name: 'Dunmore Flue Testing' }).first()).toBeUndefined();
    } finally {
      await closed.close();
    }
  });

  it('keeps a company unpaid after a declined card, and lets the admin try again', async () => {
    const company = await signUp(2);
    const declined = await submitPaymentForm(company.checkoutUrl, { card_number: TEST_CARD_DECLINED });
    expect(declined.status).toBe(402);
    expect(await declined.text()).toContain('Your card was declined.');
    await stack.drain();
    expect((await billing(company.agent)).subscription).toBeNull();

    const retry = await company.agent.post('/api/billing/checkout', { seats: 3, interval: 'year' });
    expect(retry.status).toBe(201);
    // The earlier payment page is closed, so the company cannot end up paying twice.
    expect((await fetch(company.checkoutUrl)).status).toBe(410);
    await payCheckout(retry.body.checkoutUrl);
    await stack.drain();
    const paid = await eventually(() => billing(company.agent), (b) => b.subscription?.status === 'active');
    expect(paid.subscription).toMatchObject({ interval: 'year', quantity: 3 });
    expect((await company.agent.post('/api/billing/checkout', { seats: 3, interval: 'year' })).status).toBe(409);
  });
});

describe('webhooks', () => {
  it('answers a forged, tampered or unsigned delivery with 400 and changes nothing', async () => {
    const company = await paidCompany(4);
    await addMembers(company.companyId, 2, 'assigned');
    const subscription = await stack.stripe.subscriptions.retrieve(company.subscriptionId);
    // The most damaging event there is: "the subscription ended".
    const event = {
      id: `evt_forged_${crypto.randomBytes(6).toString('hex')}`,
      object: 'event',
      api_version: Stripe.API_VERSION,
      created: Math.floor(Date.now() / 1000),
      type: 'customer.subscription.deleted',
      data: { object: { ...subscription, status: 'canceled' } },
      livemode: false,
      pending_webhooks: 1,
      request: { id: null, idempotency_key: null },
    };
    const payload = JSON.stringify(event);
    const snapshot = async () => ({
      mirror: await mirror(company.companyId),
      seats: await knex()('memberships').where({ company_id: company.companyId }).orderBy('user_id').select('user_id', 'seat_status'),
      events: await knex()('stripe_events').count<{ count: number }[]>('* as count'),
    });
    const before = await snapshot();

    const attempts = [
      { signature: signed(payload, 'whsec_someone_else'), body: payload },
      { signature: signed(payload), body: payload.replace('"livemode":false', '"livemode":false ') },
      { signature: '', body: payload },
      { signature: 't=1,v1=00', body: payload },
    ];
    for (const attempt of attempts) {
      const res = await fetch(`${stack.server.url}/api/webhooks/stripe`, {
        method: 'POST',
        headers: { 'content-type': 'application/json', ...(attempt.signature ? { 'stripe-signature': attempt.signature } : {}) },
        body: attempt.body,
      });
      expect(res.status).toBe(400);
      expect(((await res.json()) as { error: { code: string } }).error.code).toBe('bad_signature');
    }
    expect(await snapshot()).toEqual(before);
  });

  it('gives the same event delivered ten times exactly one effect', async () => {
    const company = await paidCompany(3);
    await addMembers(company.companyId, 3, 'assigned');
    const waiting = await addMembers(company.companyId, 4, 'queued');
    const { waitForMail } = await import('../helpers/mail');
    await waitForMail(company.adminEmail, { subject: /Payment received/ });

    // Seats added outside the app (as in the billing portal), invoiced at once.
    stack.gate.hold = true;
    stack.gate.held = [];
    const item = (await stack.stripe.subscriptions.retrieve(company.subscriptionId)).items.data[0];
    await stack.stripe.subscriptions.update(company.subscriptionId, { items: [{ id: item.id, quantity: 6 }], proration_behavior: 'always_invoice' });
    await stack.drain();
    stack.gate.hold = false;
    const updated = stack.gate.held.find((d) => d.type === 'customer.subscription.updated')!;
    const paidInvoice = stack.gate.held.find((d) => d.type === 'invoice.paid')!;
    expect(updated && paidInvoice).toBeTruthy();

    const statuses = await Promise.all([...Array(10)].flatMap(() => [stack.deliver(updated), stack.deliver(paidInvoice)]));
    expect(statuses.every((s) => s === 200)).toBe(true);

    for (const id of [updated.id, paidInvoice.id]) {
      const rows = await knex()('stripe_events').where({ id });
      expect(rows).toHaveLength(1);
      expect(rows[0].processed_at).not.toBeNull();
      expect(rows[0].attempts).toBe(1);
    }
    expect((await billing(company.agent)).seats).toEqual({ total: 6, used: 6, queued: 1 });
    const fills = await knex()('audit_log').where({ company_id: company.companyId, action: 'seats.filled-from-queue' });
    expect(fills).toHaveLength(1);
    expect(fills[0].details.userIds).toEqual(waiting.slice(0, 3));
    const invoiceId = JSON.parse(paidInvoice.body).data.object.id;
    expect(await knex()('stripe_invoices').where({ id: invoiceId })).toHaveLength(1);

    // One receipt for that invoice, however often its event came.
    const number = JSON.parse(paidInvoice.body).data.object.number as string;
    await waitForMail(company.adminEmail, { subject: new RegExp(number) });
    await new Promise((r) => setTimeout(r, 500));
    const inbox = (await (await fetch(`${process.env.MAIL_API_URL}/email?to.address=${encodeURIComponent(company.adminEmail)}`)).json()) as { subject: string }[];
    expect(inbox.filter((m) => m.subject.includes(number))).toHaveLength(1);
    const queued = await knex()('email_log').where({ kind: 'receipt', company_id: company.companyId }).whereLike('subject', `%${number}%`);
    expect(queued).toMatchObject([{ source: 'outbox', to_address: company.adminEmail, status: 'sent' }]);
  });

  it('ends in the right state whatever order the events arrive in', async () => {
    const company = await paidCompany(5);
    stack.gate.hold = true;
    stack.gate.held = [];
    const itemId = (await stack.stripe.subscriptions.retrieve(company.subscriptionId)).items.data[0].id;
    await stack.stripe.subscriptions.update(company.subscriptionId, { items: [{ id: itemId, quantity: 9 }] });
    await stack.stripe.subscriptions.update(company.subscriptionId, { items: [{ id: itemId, quantity: 7 }] });
    await stack.stripe.subscriptions.update(company.subscriptionId, { cancel_at_period_end: true });
    await stack.drain();
    stack.gate.hold = false;
    const updates = stack.gate.held.filter((d) => d.type === 'customer.subscription.updated');
    expect(updates).toHaveLength(3);
    // Newest first: a naive mirror would end on the oldest payload (9 seats, renewing).
    for (const delivery of [...updates].reverse()) expect(await stack.deliver(delivery)).toBe(200);
    let row = await mirror(company.companyId);
    expect(row).toMatchObject({ quantity: 7, cancel_at_period_end: true, status: 'active' });
    // Replaying the oldest again changes nothing.
    expect(await stack.deliver(updates[0])).toBe(200);
    row = await mirror(company.companyId);
    expect(row).toMatchObject({ quantity: 7, cancel_at_period_end: true });
  });

  it('ends cancelled when "deleted" overtakes "created" for a brand-new subscription', async () => {
    stack.gate.hold = true;
    stack.gate.held = [];
    const company = await signUp(4);
    await payCheckout(company.checkoutUrl);
    const sessionEvents = await stack.stripe.checkout.sessions.list({ customer: (await mirror(company.companyId)).stripe_customer_id, limit: 1 });
    const subscriptionId = sessionEvents.data[0].subscription as string;
    await stack.stripe.subscriptions.cancel(subscriptionId);
    await stack.drain();
    stack.gate.hold = false;
    const mine = stack.gate.held.filter((d) => d.body.includes(subscriptionId));
    expect(mine.map((d) => d.type)).toEqual(expect.arrayContaining(['customer.subscription.created', 'checkout.session.completed', 'customer.subscription.deleted']));
    for (const delivery of [...mine].reverse()) expect(await stack.deliver(delivery)).toBe(200);
    const summary = await billing(company.agent);
    expect(summary.subscription).toMatchObject({ status: 'canceled', inGoodStanding: false });
    expect(summary.seats.total).toBe(0);
  });
});

describe('seats and the subscription', () => {
  it('refuses to go below the seats in use with a 409 that names the number', async () => {
    const company = await paidCompany(6);
    await addMembers(company.companyId, 4, 'assigned');
    const waiting = await addMembers(company.companyId, 1, 'queued');

    const below = await company.agent.send('put', '/api/billing/seats', { seats: 3 });
    expect(below.status).toBe(409);
    expect(below.body.error.code).toBe('seats_in_use');
    expect(below.body.error.message).toMatch(/^4 seats are in use, so the count cannot go below 4/);
    expect(below.body.error.fields).toEqual([{ field: 'seats', message: 'seats: 4 seats are in use; choose 4 or more' }]);
    expect((await stack.stripe.subscriptions.retrieve(company.subscriptionId)).items.data[0].quantity).toBe(6);

    for (const bad of [{ seats: 0 }, { seats: 'many' }, { seats: 2.5 }, {}]) {
      const res = await company.agent.send('put', '/api/billing/seats', bad);
      expect(res.status).toBe(400);
      expect(res.body.error.fields[0].field).toBe('seats');
    }

    const down = await company.agent.send('put', '/api/billing/seats', { seats: 4 });
    expect(down.status).toBe(200);
    expect(down.body.seats).toEqual({ total: 4, used: 4, queued: 1 });
    expect((await stack.stripe.subscriptions.retrieve(company.subscriptionId)).items.data[0].quantity).toBe(4);

    const up = await company.agent.send('put', '/api/billing/seats', { seats: 5 });
    expect(up.body.seats).toEqual({ total: 5, used: 5, queued: 0 });
    expect(await hasSeat(knex(), waiting[0], company.companyId)).toBe(true);
    await stack.drain();
    expect((await billing(company.agent)).seats.total).toBe(5);
  });

  it('keeps the seats to the end of the paid period after cancelling, then drops them to 0', async () => {
    const company = await paidCompany(3);
    const [holder] = await addMembers(company.companyId, 2, 'assigned');

    const cancelled = await company.agent.post('/api/billing/cancel');
    expect(cancelled.status).toBe(200);
    expect(cancelled.body.subscription).toMatchObject({ status: 'active', cancelAtPeriodEnd: true, inGoodStanding: true });
    expect(cancelled.body.seats.total).toBe(3);
    expect((await stack.stripe.subscriptions.retrieve(company.subscriptionId)).cancel_at_period_end).toBe(true);

    const resumed = await company.agent.post('/api/billing/resume');
    expect(resumed.body.subscription.cancelAtPeriodEnd).toBe(false);
    expect((await company.agent.post('/api/billing/cancel')).status).toBe(200);
    await stack.drain();
    expect(await hasSeat(knex(), holder, company.companyId)).toBe(true);

    // Past the end of the period the payment service ends the subscription.
    await stack.advanceClock(32 * 86_400);
    const ended = await eventually(() => billing(company.agent), (b) => b.subscription?.status === 'canceled');
    expect(ended.subscription).toMatchObject({ status: 'canceled', inGoodStanding: false });
    expect(ended.seats).toEqual({ total: 0, used: 0, queued: 2 });
    expect(await hasSeat(knex(), holder, company.companyId)).toBe(false);
    expect((await company.agent.post('/api/billing/cancel')).status).toBe(409);

    // Subscribing again hands the seats back in the order people held them.
    const again = await company.agent.post('/api/billing/checkout', { seats: 1, interval: 'month' });
    await payCheckout(again.body.checkoutUrl);
    await stack.drain();
    const back = await eventually(() => billing(company.agent), (b) => b.subscription?.status === 'active');
    expect(back.seats).toEqual({ total: 1, used: 1, queued: 1 });
    expect(await hasSeat(knex(), holder, company.companyId)).toBe(true);
  });

  it('lists invoices from the payment service and opens the billing portal', async () => {
    const company = await paidCompany(2, 'year');
    const invoices = await company.agent.get('/api/billing/invoices').expect(200);
    expect(invoices.body.hasMore).toBe(false);
    expect(invoices.body.invoices).toHaveLength(1);
    expect(invoices.body.invoices[0]).toMatchObject({ total: 36000, amountPaid: 36000, currency: 'usd', status: 'paid' });
    expect(invoices.body.invoices[0].hostedInvoiceUrl).toMatch(new RegExp(`^${stack.fake.url}/invoices/in_`));
    const portal = await company.agent.post('/api/billing/portal');
    expect(portal.status).toBe(200);
    expect(portal.body.url).toMatch(new RegExp(`^${stack.fake.url}/portal/bps_`));
    expect((await company.agent.get('/api/billing/invoices?startingAfter=not-an-id')).status).toBe(400);
  });

  it('keeps billing to admins of the company', async () => {
    const company = await paidCompany(2);
    const crew = await createUser(knex(), { companyId: company.companyId, roles: ['crew', 'manager'] });
    const agent = await signedIn(app(), crew.email, crew.password);
    for (const [method, path] of [['get', '/api/billing'], ['put', '/api/billing/seats'], ['post', '/api/billing/cancel'], ['get', '/api/billing/invoices']] as const) {
      const res = method === 'get' ? await agent.get(path) : await agent.send(method, path, { seats: 1 });
      expect(res.status, path).toBe(403);
    }
    expect((await agent.get('/api/company/my-seat')).body).toMatchObject({ companyId: company.companyId, seat: 'none', usable: false });
  });
});

describe('demo billing seed', () => {
  it('makes the demo subscription in the payment fake once, with seats for the demo crew', async () => {
    const { seedDemoBilling } = await import('../../server/dev/demo-billing');
    const { DEMO_COMPANY_ID } = await import('../../server/dev/demo-data');
    await knex()('companies').insert({ id: DEMO_COMPANY_ID, name: 'Bramblewick Source Testing', kind: 'customer' });
    await createUser(knex(), { companyId: DEMO_COMPANY_ID, roles: ['admin', 'manager'] });
    await addMembers(DEMO_COMPANY_ID, 3, 'none');
    const env = { DATABASE_URL: stack.server.databaseUrl, STRIPE_API_URL: stack.fake.url, STRIPE_SECRET_KEY: 'sk_test_demo_seed', STRIPE_WEBHOOK_SECRET: WEBHOOK_SECRET };
    const saved = Object.fromEntries(Object.keys(env).map((key) => [key, process.env[key]]));
    Object.assign(process.env, env);
    try {
      expect(await seedDemoBilling(knex())).toMatch(/16 yearly seats/);
      const first = await mirror(DEMO_COMPANY_ID);
      expect(first).toMatchObject({ status: 'active', interval: 'year', quantity: 16 });
      expect(await knex()('memberships').where({ company_id: DEMO_COMPANY_ID, seat_status: 'assigned' })).toHaveLength(3);
      expect(await seedDemoBilling(knex())).toMatch(/already in place/);
      expect((await mirror(DEMO_COMPANY_ID)).stripe_subscription_id).toBe(first.stripe_subscription_id);
      const subscriptions = await stack.stripe.subscriptions.list({ customer: first.stripe_customer_id, status: 'all' });
      expect(subscriptions.data).toHaveLength(1);
    } finally {
      for (const [key, value] of Object.entries(saved)) {
        if (value === undefined) delete process.env[key];
        else process.env[key] = value;
      }
    }
  });
});
