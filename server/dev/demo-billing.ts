import type { Knex } from 'knex';
import { loadConfig } from '../config';
import { applySubscription } from '../services/billing';
import { lockSeats } from '../services/seats';
import { createStripeClient, ensureSeatPrices } from '../services/stripe';
import { DEMO_COMPANY_ID } from './demo-data';

/**
 * The demo company's subscription, made for real in the local payment fake through the SDK (a
 * customer, a checkout for DEMO_SEATS yearly seats, paid on the fake's page with a test card) and
 * mirrored here, with seats for the demo crew. Idempotent: a run that finds the subscription alive
 * in the fake does nothing. Skipped when payments point at anything but our local fake.
 * Runs from the start command after migrations and the demo seed, before the app listens, so the
 * mirror is written directly; the fake's webhooks for it arrive (or are retried) once the app is up
 * and change nothing.
 */
const DEMO_SEATS = 16;
const TEST_CARD = { card_number: '4242 4242 4242 4242', card_expiry: '12 / 39', card_cvc: '123', cardholder_name: 'Rosalind Achebe-Farrow' };

async function isLocalFake(apiUrl: string | undefined): Promise<boolean> {
  if (!apiUrl) return false;
  try {
    const res = await fetch(`${apiUrl.replace(/\/$/, '')}/_fake/clock`, { signal: AbortSignal.timeout(3_000) });
    return res.ok;
  } catch {
    return false;
  }
}

const missing = (error: unknown) => (error as { statusCode?: number }).statusCode === 404;

export async function seedDemoBilling(knex: Knex): Promise<string> {
  const config = loadConfig();
  if (!(await isLocalFake(process.env.STRIPE_API_URL))) return 'Demo billing: skipped (payments do not point at the local payment fake).';
  const company = await knex('companies').where({ id: DEMO_COMPANY_ID }).first('id', 'name');
  if (!company) return 'Demo billing: skipped (no demo company).';
  const stripe = createStripeClient(config.stripe);
  const catalogue = await ensureSeatPrices(stripe);
  const row = await knex('subscriptions').where({ company_id: DEMO_COMPANY_ID }).first();

  if (row?.stripe_subscription_id) {
    try {
      const live = await stripe.subscriptions.retrieve(row.stripe_subscription_id);
      if (live.status !== 'canceled') return `Demo billing: already in place (${row.quantity} seats).`;
    } catch (error) {
      if (!missing(error)) throw error;
      // The fake's state was deleted; make the subscription again below.
    }
  }

  let customerId: string | null = row?.stripe_customer_id ?? null;
  if (customerId) {
    try {
      await stripe.customers.retrieve(customerId);
    } catch (error) {
      if (!missing(error)) throw error;
      customerId = null;
    }
  }
  if (!customerId) {
    customerId = (await stripe.customers.create({ name: company.name, email: 'admin@demo.plumewright.example', metadata: { company_id: DEMO_COMPANY_ID } })).id;
  }
  const session = await stripe.checkout.sessions.create({
    mode: 'subscription',
    customer: customerId,
    line_items: [{ price: catalogue.year.priceId, quantity: DEMO_SEATS }],
    success_url: `${config.appUrl}/billing/return?session_id={CHECKOUT_SESSION_ID}`,
    cancel_url: `${config.appUrl}/billing/cancelled`,
    client_reference_id: DEMO_COMPANY_ID,
    metadata: { company_id: DEMO_COMPANY_ID },
    subscription_data: { metadata: { company_id: DEMO_COMPANY_ID } },
  });
  // The fake has no "create subscription" call; paying its hosted page with a test card is how one starts.
  const paid = await fetch(session.url!, { method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded' }, body: new URLSearchParams(TEST_CARD), redirect: 'manual' });
  if (paid.status !== 303) throw new Error(`Demo billing: the payment fake answered ${paid.status} to the test card.`);
  const completed = await stripe.checkout.sessions.retrieve(session.id);
  const subscription = await stripe.subscriptions.retrieve(completed.subscription as string);

  await knex.transaction(async (trx) => {
    await trx.raw('insert into subscriptions (company_id, stripe_customer_id) values (?, ?) on conflict (company_id) do update set stripe_customer_id = excluded.stripe_customer_id', [DEMO_COMPANY_ID, customerId]);
    const locked = await lockSeats(trx, DEMO_COMPANY_ID);
    await applySubscription(trx, DEMO_COMPANY_ID, locked, subscription);
    // The demo crew (everyone with the crew role) starts with seats; the admin manages without one.
    const crew = await trx('memberships')
      .where({ company_id: DEMO_COMPANY_ID, seat_status: 'none' })
      .whereRaw("'crew' = any(roles)")
      .orderBy('created_at')
      .limit(DEMO_SEATS)
      .pluck('id');
    await trx('memberships').whereIn('id', crew).update({ seat_status: 'assigned', seat_assigned_at: trx.fn.now(), updated_at: trx.fn.now() });
  });
  return `Demo billing: ${DEMO_SEATS} yearly seats for ${company.name} in the payment fake.`;
}
