import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type Stripe from 'stripe';
import type request from 'supertest';
import { createTestApp, type TestApp } from '../helpers/app';
import { TestAgent, signedIn } from '../helpers/agent';
import { createCompany, createUser } from '../helpers/factory';
import { receiveEvent } from '../../server/services/webhooks';
import type { OperatorCompanyRow, PaymentEventRow } from '../../shared/operator-console';

/**
 * The operator console's company and payment-event lists against a real database: paging, sorting,
 * filters, the detail views, seat numbers that match the company's own billing page, and who may ask.
 */
let t: TestApp;
let operator: TestAgent;
const admins = new Map<string, TestAgent>();
const others = new Map<'admin' | 'manager' | 'crew' | 'auditor', TestAgent>();
const company = new Map<string, string>();

const HOUR = 3_600_000;
const ago = (hours: number) => new Date(Date.now() - hours * HOUR);
const fieldsOf = (res: request.Response) => (res.body.error?.fields ?? []).map((f: { field: string }) => f.field);
const names = (rows: { name: string }[]) => rows.map((r) => r.name);

async function addMember(companyId: string, name: string, roles: ('admin' | 'manager' | 'crew')[], seat: 'assigned' | 'queued' | 'none') {
  const user = await createUser(t.knex, { companyId, roles, name });
  await t.knex('memberships').where({ user_id: user.id, company_id: companyId }).update({
    seat_status: seat,
    seat_assigned_at: seat === 'assigned' ? t.knex.fn.now() : null,
    queued_at: seat === 'queued' ? t.knex.fn.now() : null,
  });
  return user;
}

async function subscribe(companyId: string, row: { customer: string; status: string; interval: 'month' | 'year'; quantity: number; periodEnd: Date; cancelAtPeriodEnd?: boolean }) {
  await t.knex('subscriptions').insert({
    company_id: companyId,
    stripe_customer_id: row.customer,
    stripe_subscription_id: `sub_${row.customer.slice(4)}`,
    status: row.status,
    interval: row.interval,
    quantity: row.quantity,
    current_period_end: row.periodEnd,
    cancel_at_period_end: row.cancelAtPeriodEnd ?? false,
  });
}

/** What the payment service calls the object inside each event type used here. */
const OBJECT_OF: Record<string, string> = { 'invoice.paid': 'invoice', 'checkout.session.completed': 'checkout.session', 'customer.subscription.updated': 'subscription' };

async function storeEvent(row: { id: string; type: string; createdHoursAgo: number; customer: string | null; companyId?: string; state: 'processed' | 'failed' | 'pending'; error?: string }) {
  const payload = { id: row.id, object: 'event', type: row.type, created: Math.floor(ago(row.createdHoursAgo).getTime() / 1000), data: { object: { id: `obj_${row.id}`, object: OBJECT_OF[row.type], customer: row.customer } } };
  await t.knex('stripe_events').insert({
    id: row.id,
    type: row.type,
    event_created: ago(row.createdHoursAgo),
    received_at: ago(row.createdHoursAgo - 0.01),
    payload: JSON.stringify(payload),
    processed_at: row.state === 'processed' ? ago(row.createdHoursAgo - 0.02) : null,
    attempts: row.state === 'pending' ? 0 : row.state === 'failed' ? 2 : 1,
    last_error: row.state === 'failed' ? (row.error ?? 'failed') : null,
    company_id: row.state === 'processed' ? (row.companyId ?? null) : null,
  });
  return payload;
}

let failedPayload: unknown;

beforeAll(async () => {
  t = await createTestApp();
  const k = t.knex;
  for (const [key, name, kind] of [
    ['brackwater', 'Brackwater Emission Services', 'customer'],
    ['cindervale', 'Cindervale Stack Labs', 'customer'],
    ['duskfield', 'Duskfield Source Testing', 'customer'],
    ['embermoor', 'Embermoor Sampling 100% Crew', 'customer'],
    ['fallowbrook', 'Fallowbrook Review Partners', 'auditing'],
    ['gullhaven', 'Gullhaven Platform Staff', 'platform'],
  ] as const) {
    company.set(key, (await createCompany(k, name, kind)).id);
  }
  // Created one after another, a day apart, so "created" sorts in this order.
  for (const [i, key] of ['brackwater', 'cindervale', 'duskfield', 'embermoor', 'fallowbrook', 'gullhaven'].entries()) {
    await k('companies').where({ id: company.get(key) }).update({ created_at: ago(24 * (10 - i)) });
  }

  // Paid up, every seat taken and one person waiting.
  await subscribe(company.get('brackwater')!, { customer: 'cus_brackwater', status: 'active', interval: 'month', quantity: 2, periodEnd: ago(-20 * 24) });
  const brackAdmin = await addMember(company.get('brackwater')!, 'Orla Brackwater-Finch', ['admin'], 'assigned');
  const brackManager = await addMember(company.get('brackwater')!, 'Teodor Quillane', ['manager'], 'none');
  const brackCrew = await addMember(company.get('brackwater')!, 'Wynn Ashcombe', ['crew'], 'assigned');
  await addMember(company.get('brackwater')!, 'Isaura Penhallow', ['crew'], 'queued');
  // Cancelled at the end of a period that is already over: no seats, though the status still reads active.
  await subscribe(company.get('cindervale')!, { customer: 'cus_cindervale', status: 'active', interval: 'year', quantity: 4, periodEnd: ago(48), cancelAtPeriodEnd: true });
  const cinderAdmin = await addMember(company.get('cindervale')!, 'Merrit Oakhanger', ['admin'], 'assigned');
  await subscribe(company.get('duskfield')!, { customer: 'cus_duskfield', status: 'past_due', interval: 'month', quantity: 3, periodEnd: ago(-5 * 24) });
  const duskAdmin = await addMember(company.get('duskfield')!, 'Sabeline Roke', ['admin'], 'none');
  const emberAdmin = await addMember(company.get('embermoor')!, 'Caspian Thirlby', ['admin'], 'none');
  const auditor = await createUser(k, { companyId: company.get('fallowbrook')!, roles: ['auditor'], name: 'Hesper Vantongeren' });
  const op = await createUser(k, { companyId: company.get('gullhaven')!, roles: ['operator'], name: 'Lorcan Mistry-Hale' });

  operator = await signedIn(t.app, op.email, op.password);
  for (const [key, user] of [['brackwater', brackAdmin], ['cindervale', cinderAdmin], ['duskfield', duskAdmin], ['embermoor', emberAdmin]] as const) {
    admins.set(key, await signedIn(t.app, user.email, user.password));
  }
  others.set('admin', admins.get('brackwater')!);
  others.set('manager', await signedIn(t.app, brackManager.email, brackManager.password));
  others.set('crew', await signedIn(t.app, brackCrew.email, brackCrew.password));
  others.set('auditor', await signedIn(t.app, auditor.email, auditor.password));

  // Subscription history of Brackwater, with entries that are not about the subscription mixed in.
  const audit = (companyKey: string, action: string, hoursAgo: number, details: object = {}, actor: string | null = null) =>
    k('audit_log').insert({ company_id: company.get(companyKey), action, at: ago(hoursAgo), details: JSON.stringify(details), actor_user_id: actor });
  await audit('brackwater', 'company.signed-up', 30, { seats: 1 }, brackAdmin.id);
  await audit('brackwater', 'billing.subscription-synced', 29, { status: 'active', quantity: 1, seatsBefore: 0, seatsAfter: 1 });
  await audit('brackwater', 'member.removed', 20, { name: 'Someone Else' }, brackAdmin.id);
  await audit('brackwater', 'billing.seats-changed', 10, { from: 1, to: 2 }, brackAdmin.id);
  await audit('brackwater', 'sign-in', 5, {}, brackAdmin.id);
  await audit('cindervale', 'billing.cancel-requested', 8, {}, cinderAdmin.id);

  // Payment events: applied, failed, waiting, and one received through the webhook service itself.
  await storeEvent({ id: 'evt_brack_invoice', type: 'invoice.paid', createdHoursAgo: 9, customer: 'cus_brackwater', companyId: company.get('brackwater'), state: 'processed' });
  for (let i = 1; i <= 5; i++) {
    await storeEvent({ id: `evt_cinder_checkout_${i}`, type: 'checkout.session.completed', createdHoursAgo: 20 + i, customer: 'cus_cindervale', companyId: company.get('cindervale'), state: 'processed' });
  }
  failedPayload = await storeEvent({ id: 'evt_dusk_failed', type: 'customer.subscription.updated', createdHoursAgo: 3, customer: 'cus_duskfield', state: 'failed', error: 'The payment service did not answer in time.' });
  await storeEvent({ id: 'evt_stranger_waiting', type: 'invoice.paid', createdHoursAgo: 1, customer: 'cus_nobody_we_know', state: 'pending' });
  const customerUpdated = {
    id: 'evt_brack_customer_updated', object: 'event', type: 'customer.updated', created: Math.floor(ago(2).getTime() / 1000),
    data: { object: { id: 'cus_brackwater', object: 'customer', email: 'accounts@brackwater.example' } },
  } as unknown as Stripe.Event;
  expect(await receiveEvent(t.ctx, customerUpdated)).toBe('processed');
});
afterAll(() => t?.close());

describe('companies and subscriptions', () => {
  const list = async (query: string) => (await operator.get(`/api/operator/company-subscriptions?${query}`).expect(200)).body as { companies: OperatorCompanyRow[]; total: number; page: number; pageSize: number };

  it('pages through every company without gaps or repeats', async () => {
    const first = await list('pageSize=4&page=1');
    const second = await list('pageSize=4&page=2');
    const beyond = await list('pageSize=4&page=3');
    expect(first.total).toBe(6);
    expect([first.companies.length, second.companies.length, beyond.companies.length]).toEqual([4, 2, 0]);
    expect([...names(first.companies), ...names(second.companies)]).toEqual([
      'Brackwater Emission Services', 'Cindervale Stack Labs', 'Duskfield Source Testing', 'Embermoor Sampling 100% Crew', 'Fallowbrook Review Partners', 'Gullhaven Platform Staff',
    ]);
    expect(first).toMatchObject({ page: 1, pageSize: 4 });
  });

  it('sorts on the server by name, members, period end and creation, both ways', async () => {
    expect(names((await list('sort=name&order=desc')).companies)[0]).toBe('Gullhaven Platform Staff');
    const byMembers = (await list('sort=members&order=desc')).companies;
    expect(byMembers.map((c) => [c.name, c.members])[0]).toEqual(['Brackwater Emission Services', 4]);
    expect(byMembers.slice(1).every((c) => c.members === 1)).toBe(true);
    // Companies without a subscription have no period end and go last, whichever way.
    expect(names((await list('sort=periodEnd&order=asc')).companies)).toEqual([
      'Cindervale Stack Labs', 'Duskfield Source Testing', 'Brackwater Emission Services', 'Embermoor Sampling 100% Crew', 'Fallowbrook Review Partners', 'Gullhaven Platform Staff',
    ]);
    expect(names((await list('sort=periodEnd&order=desc')).companies).slice(0, 3)).toEqual(['Brackwater Emission Services', 'Duskfield Source Testing', 'Cindervale Stack Labs']);
    const newest = (await list('sort=created')).companies;
    expect(names(newest)[0]).toBe('Gullhaven Platform Staff');
    expect(newest.map((c) => c.createdAt)).toEqual([...newest.map((c) => c.createdAt)].sort().reverse());
    expect(names((await list('sort=kind&pageSize=1')).companies)).toEqual(['Fallowbrook Review Partners']);
  });

  it('filters by kind and subscription status, and searches names and payment-service ids', async () => {
    expect(names((await list('kind=auditing')).companies)).toEqual(['Fallowbrook Review Partners']);
    expect((await list('kind=customer')).total).toBe(4);
    expect(names((await list('status=none')).companies)).toEqual(['Embermoor Sampling 100% Crew', 'Fallowbrook Review Partners', 'Gullhaven Platform Staff']);
    expect(names((await list('status=past_due')).companies)).toEqual(['Duskfield Source Testing']);
    expect(names((await list('q=STACK')).companies)).toEqual(['Cindervale Stack Labs']);
    // A percent sign is a letter to look for, not a wildcard.
    expect(names((await list(`q=${encodeURIComponent('%')}`)).companies)).toEqual(['Embermoor Sampling 100% Crew']);
    expect(names((await list('q=cus_duskfield')).companies)).toEqual(['Duskfield Source Testing']);
    expect(names((await list('q=sub_cindervale')).companies)).toEqual(['Cindervale Stack Labs']);
    const none = await list('kind=platform&status=active');
    expect(none).toMatchObject({ total: 0, companies: [] });
  });

  it("shows the same seats and subscription as each company's own billing page", async () => {
    const all = (await list('pageSize=100')).companies;
    for (const [key, agent] of admins) {
      const billing = (await agent.get('/api/billing').expect(200)).body;
      const row = all.find((c) => c.id === company.get(key))!;
      expect(row.seats, key).toEqual(billing.seats);
      if (billing.subscription) {
        const { plan: _plan, ...subscription } = billing.subscription;
        expect(row.subscription, key).toEqual(subscription);
      } else {
        expect(row.subscription, key).toBeNull();
      }
    }
    // The numbers themselves, so a shared mistake would not pass unseen.
    expect(all.find((c) => c.name.startsWith('Brackwater'))).toMatchObject({ members: 4, seats: { total: 2, used: 2, queued: 1 }, subscription: { status: 'active', interval: 'month', cancelAtPeriodEnd: false, inGoodStanding: true } });
    expect(all.find((c) => c.name.startsWith('Cindervale'))).toMatchObject({ seats: { total: 0, used: 1, queued: 0 }, subscription: { status: 'active', cancelAtPeriodEnd: true, inGoodStanding: false } });
    expect(all.find((c) => c.name.startsWith('Duskfield'))).toMatchObject({ seats: { total: 3, used: 0, queued: 0 }, subscription: { status: 'past_due', inGoodStanding: true } });
    expect(all.find((c) => c.name.startsWith('Fallowbrook'))).toMatchObject({ kind: 'auditing', seats: { total: 0, used: 0, queued: 0 }, subscription: null });
  });

  it("shows one company's subscription changes, newest first, and its payment events", async () => {
    const detail = (await operator.get(`/api/operator/company-subscriptions/${company.get('brackwater')}`).expect(200)).body;
    expect(detail.company).toMatchObject({ name: 'Brackwater Emission Services', seats: { total: 2, used: 2, queued: 1 } });
    expect(detail.changes.map((c: { action: string }) => c.action)).toEqual(['billing.seats-changed', 'billing.subscription-synced', 'company.signed-up']);
    expect(detail.changes[0]).toMatchObject({ actorName: 'Orla Brackwater-Finch', details: { from: 1, to: 2 } });
    expect(detail.changes[1].actorName).toBeNull();
    // One applied with the company recorded, one whose company is read from the customer it names.
    expect(detail.events.map((e: PaymentEventRow) => e.id)).toEqual(['evt_brack_customer_updated', 'evt_brack_invoice']);

    const missing = await operator.get('/api/operator/company-subscriptions/6f1d8c2e-3b7a-4c55-9e21-0a4b7d9c1e35');
    expect(missing.status).toBe(404);
    const bad = await operator.get('/api/operator/company-subscriptions/brackwater');
    expect(bad.status).toBe(400);
    expect(fieldsOf(bad)).toEqual(['id']);
  });
});

describe('payment webhook log', () => {
  const list = async (query: string) => (await operator.get(`/api/operator/payment-events?${query}`).expect(200)).body as {
    events: PaymentEventRow[]; total: number; types: string[]; unprocessed: { failed: number; pending: number };
  };
  const ids = (rows: PaymentEventRow[]) => rows.map((r) => r.id);

  it('pages newest first and counts what is not applied', async () => {
    const first = await list('pageSize=4');
    expect(first.total).toBe(9);
    // The event received through the webhook service arrived last (now), the stored ones hours ago.
    expect(ids(first.events)).toEqual(['evt_brack_customer_updated', 'evt_stranger_waiting', 'evt_dusk_failed', 'evt_brack_invoice']);
    const rest = [...(await list('pageSize=4&page=2')).events, ...(await list('pageSize=4&page=3')).events];
    expect(ids(rest)).toEqual(['evt_cinder_checkout_1', 'evt_cinder_checkout_2', 'evt_cinder_checkout_3', 'evt_cinder_checkout_4', 'evt_cinder_checkout_5']);
    expect(first.unprocessed).toEqual({ failed: 1, pending: 1 });
    expect(first.types).toEqual(['checkout.session.completed', 'customer.subscription.updated', 'customer.updated', 'invoice.paid']);
    expect(Object.keys(first.events[0]).sort()).toEqual(['attempts', 'company', 'createdAt', 'id', 'lastError', 'processedAt', 'receivedAt', 'state', 'type']);
    expect(JSON.stringify(first)).not.toContain('payload');
  });

  it('sorts by creation time and by type', async () => {
    const oldest = (await list('sort=created&order=asc&pageSize=2')).events;
    expect(ids(oldest)).toEqual(['evt_cinder_checkout_5', 'evt_cinder_checkout_4']);
    const byType = (await list('sort=type&pageSize=100')).events.map((e) => e.type);
    expect(byType).toEqual([...byType].sort());
    expect(byType[0]).toBe('checkout.session.completed');
  });

  it('filters by type, by state and by company, and names the company an event touched', async () => {
    expect(ids((await list('type=invoice.paid')).events)).toEqual(['evt_stranger_waiting', 'evt_brack_invoice']);
    const failed = (await list('status=failed')).events;
    expect(failed).toHaveLength(1);
    expect(failed[0]).toMatchObject({
      id: 'evt_dusk_failed', state: 'failed', processedAt: null, attempts: 2, lastError: 'The payment service did not answer in time.',
      company: { id: company.get('duskfield'), name: 'Duskfield Source Testing' },
    });
    const pending = (await list('status=pending')).events;
    expect(pending.map((e) => [e.id, e.state, e.company])).toEqual([['evt_stranger_waiting', 'pending', null]]);
    const processed = await list('status=processed&pageSize=100');
    expect(processed.total).toBe(7);
    expect(processed.events.every((e) => e.state === 'processed' && e.processedAt)).toBe(true);
    expect(ids((await list(`companyId=${company.get('brackwater')}`)).events)).toEqual(['evt_brack_customer_updated', 'evt_brack_invoice']);
    expect((await list(`companyId=${company.get('cindervale')}&type=invoice.paid`)).total).toBe(0);
    expect(ids((await list('q=duskfield')).events)).toEqual(['evt_dusk_failed']);
    expect(ids((await list('q=customer_updated')).events)).toEqual(['evt_brack_customer_updated']);
  });

  it('shows one event with the payload as it was stored', async () => {
    const detail = (await operator.get('/api/operator/payment-events/evt_dusk_failed').expect(200)).body;
    expect(detail).toMatchObject({ id: 'evt_dusk_failed', type: 'customer.subscription.updated', state: 'failed', company: { name: 'Duskfield Source Testing' } });
    expect(detail.payload).toEqual(failedPayload);
    const received = (await operator.get('/api/operator/payment-events/evt_brack_customer_updated').expect(200)).body;
    expect(received).toMatchObject({ state: 'processed', attempts: 1, company: { name: 'Brackwater Emission Services' } });
    expect(received.payload.data.object.email).toBe('accounts@brackwater.example');
    expect((await operator.get('/api/operator/payment-events/evt_never_received')).status).toBe(404);
    const bad = await operator.get(`/api/operator/payment-events/${encodeURIComponent('evt one!')}`);
    expect(bad.status).toBe(400);
    expect(fieldsOf(bad)).toEqual(['eventId']);
  });
});

describe('who may look, and what a bad query gets', () => {
  const paths = () => [
    '/api/operator/company-subscriptions',
    `/api/operator/company-subscriptions/${company.get('brackwater')}`,
    '/api/operator/payment-events',
    '/api/operator/payment-events/evt_brack_invoice',
  ];

  it('answers 403 to company admins, managers, crew and auditors, and 401 to nobody signed in', async () => {
    for (const [role, agent] of others) {
      for (const path of paths()) {
        const res = await agent.get(path);
        expect(res.status, `${role} → ${path}`).toBe(403);
        expect(res.body.error.code).toBe('forbidden');
      }
    }
    for (const path of paths()) expect((await new TestAgent(t.app).get(path)).status, path).toBe(401);
  });

  it('names every bad field in a 400', async () => {
    const tooBig = await operator.get('/api/operator/company-subscriptions?pageSize=101');
    expect(tooBig.status).toBe(400);
    expect(tooBig.body.error.fields).toEqual([{ field: 'pageSize', message: 'pageSize: must be at most 100' }]);

    const several = await operator.get('/api/operator/company-subscriptions?page=0&sort=seats&order=up&kind=vendor&status=late');
    expect(several.status).toBe(400);
    expect(fieldsOf(several).sort()).toEqual(['kind', 'order', 'page', 'sort', 'status']);
    expect(several.body.error.message).toMatch(/sort: must be one of name, kind, members/);

    const events = await operator.get('/api/operator/payment-events?status=lost&type=Invoice%20Paid&companyId=brackwater&pageSize=abc');
    expect(events.status).toBe(400);
    expect(fieldsOf(events).sort()).toEqual(['companyId', 'pageSize', 'status', 'type']);
    expect(events.body.error.fields.find((f: { field: string }) => f.field === 'status').message).toBe('status: must be one of processed, failed, pending');
  });
});
