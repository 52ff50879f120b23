import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import Stripe from 'stripe';
import { afterEach, describe, expect, it } from 'vitest';
import { signatureHeader, startStripeFake, type StartedStripeFake } from '../../../server/fakes/stripe';
import { startWebhookReceiver, submitPaymentForm, type WebhookReceiver } from '../../../server/fakes/stripe/test-support';

const WEBHOOK_SECRET = 'whsec_unit_webhook_secret';
const FAST_RETRY = { initialDelayMs: 10, maxDelayMs: 40, maxAttempts: 4, timeoutMs: 2000 };

interface FakeEventRecord {
  id: string;
  type: string;
  status: string;
  attempts: { statusCode: number | null; error: string | null }[];
}

const cleanups: (() => Promise<void> | void)[] = [];
afterEach(async () => {
  while (cleanups.length > 0) await cleanups.pop()?.();
});

async function receiverFor(statusFor?: (deliveryNumber: number) => number): Promise<WebhookReceiver> {
  const receiver = await startWebhookReceiver({ secret: WEBHOOK_SECRET, statusFor });
  cleanups.push(() => receiver.close());
  return receiver;
}

async function fakeWith(options: { webhookUrl?: string; stateFile?: string; maxAttempts?: number } = {}): Promise<StartedStripeFake> {
  const fake = await startStripeFake({
    webhookSecret: WEBHOOK_SECRET,
    webhookUrl: options.webhookUrl,
    stateFile: options.stateFile,
    retry: { ...FAST_RETRY, maxAttempts: options.maxAttempts ?? FAST_RETRY.maxAttempts },
  });
  cleanups.push(() => fake.close());
  return fake;
}

const sdk = (fake: StartedStripeFake) =>
  new Stripe('sk_test_unit_webhooks', { host: '127.0.0.1', port: fake.port, protocol: 'http', maxNetworkRetries: 0 });

async function fakeEvents(fake: StartedStripeFake, type?: string): Promise<FakeEventRecord[]> {
  const response = await fetch(`${fake.url}/_fake/events${type ? `?type=${encodeURIComponent(type)}` : ''}`);
  return ((await response.json()) as { data: FakeEventRecord[] }).data;
}

async function drain(fake: StartedStripeFake) {
  const response = await fetch(`${fake.url}/_fake/webhooks/drain`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"timeout_ms":5000}' });
  expect(await response.json()).toEqual({ idle: true });
}

/** A loopback port with nothing listening, for connection-refused deliveries. */
async function closedPort(): Promise<number> {
  const server = createServer();
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', () => resolve()));
  const { port } = server.address() as { port: number };
  await new Promise<void>((resolve) => server.close(() => resolve()));
  return port;
}

describe('signing', () => {
  it('signs exactly as the SDK test helper does', () => {
    const payload = JSON.stringify({ id: 'evt_signing', object: 'event' });
    const timestamp = 1_900_000_000;
    const expected = Stripe.webhooks.generateTestHeaderString({ payload, secret: WEBHOOK_SECRET, timestamp });
    expect(signatureHeader(payload, WEBHOOK_SECRET, timestamp)).toBe(expected);
  });
});

describe('delivery', () => {
  it('retries with backoff when the receiver first answers 500', async () => {
    const receiver = await receiverFor((deliveryNumber) => (deliveryNumber <= 2 ? 500 : 200));
    const fake = await fakeWith({ webhookUrl: receiver.url });
    const customer = await sdk(fake).customers.create({ email: 'retry@example.test' });

    await receiver.waitFor((events) => events.length === 1);
    expect(receiver.deliveries.map((delivery) => delivery.status)).toEqual([500, 500, 200]);
    expect((receiver.events[0].data.object as Stripe.Customer).id).toBe(customer.id);
    await drain(fake);
    const [record] = await fakeEvents(fake, 'customer.created');
    expect(record.status).toBe('delivered');
    expect(record.attempts.map((attempt) => attempt.statusCode)).toEqual([500, 500, 200]);
  });

  it('gives up after the configured number of attempts when the receiver is unreachable', async () => {
    const fake = await fakeWith({ webhookUrl: `http://127.0.0.1:${await closedPort()}/webhooks/stripe`, maxAttempts: 3 });
    await sdk(fake).customers.create({ email: 'unreachable@example.test' });
    await drain(fake);
    const [record] = await fakeEvents(fake);
    expect(record.status).toBe('failed');
    expect(record.attempts).toHaveLength(3);
    expect(record.attempts.every((attempt) => attempt.statusCode === null && attempt.error)).toBe(true);
  });

  it('resends an event on request', async () => {
    const receiver = await receiverFor();
    const fake = await fakeWith({ webhookUrl: receiver.url });
    await sdk(fake).customers.create({ email: 'resend@example.test' });
    await receiver.waitFor((events) => events.length === 1);
    const [record] = await fakeEvents(fake);

    const response = await fetch(`${fake.url}/_fake/resend/${record.id}`, { method: 'POST' });
    expect(response.status).toBe(200);
    expect(((await response.json()) as { attempt: { statusCode: number } }).attempt.statusCode).toBe(200);
    expect(receiver.events.map((event) => event.id)).toEqual([record.id, record.id]);
    expect((await fetch(`${fake.url}/_fake/resend/evt_unknown`, { method: 'POST' })).status).toBe(404);
  });

  it('records events without sending them when no webhook URL is set', async () => {
    const fake = await fakeWith();
    await sdk(fake).customers.create({ email: 'quiet@example.test' });
    const [record] = await fakeEvents(fake);
    expect(record.type).toBe('customer.created');
    expect(record.status).toBe('not_sent');
    const viaApi = await sdk(fake).events.retrieve(record.id);
    expect(viaApi.type).toBe('customer.created');
  });
});

describe('state file', () => {
  function stateDirectory(): string {
    const directory = mkdtempSync(path.join(tmpdir(), 'stripe-fake-state-'));
    cleanups.push(() => rmSync(directory, { recursive: true, force: true }));
    return directory;
  }

  it('survives a restart on the same file, clock offset included', async () => {
    const stateFile = path.join(stateDirectory(), 'stripe.json');
    const first = await fakeWith({ stateFile });
    const stripe = sdk(first);
    const price = await stripe.prices.create({
      product_data: { name: 'Crew seat' },
      currency: 'usd',
      unit_amount: 2500,
      recurring: { interval: 'month' },
      lookup_key: 'restart_seat_monthly',
    });
    const session = await stripe.checkout.sessions.create({
      mode: 'subscription',
      line_items: [{ price: price.id, quantity: 2 }],
      customer_email: 'restart@example.test',
      success_url: 'http://127.0.0.1:5173/done',
    });
    await submitPaymentForm(session.url as string);
    const subscriptionId = (await stripe.checkout.sessions.retrieve(session.id)).subscription as string;
    await fetch(`${first.url}/_fake/advance-clock`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"seconds":3600}' });
    const eventCount = (await fakeEvents(first)).length;
    await first.close();

    expect(readdirSync(path.dirname(stateFile))).toEqual(['stripe.json']); // no temporary files left behind
    expect(() => JSON.parse(readFileSync(stateFile, 'utf8'))).not.toThrow();

    const second = await fakeWith({ stateFile });
    const again = sdk(second);
    const subscription = await again.subscriptions.retrieve(subscriptionId);
    expect(subscription.items.data[0].quantity).toBe(2);
    expect((await again.invoices.list({ subscription: subscriptionId })).data).toHaveLength(1);
    expect((await again.prices.list({ lookup_keys: ['restart_seat_monthly'] })).data[0].id).toBe(price.id);
    expect((await again.checkout.sessions.retrieve(session.id)).status).toBe('complete');
    expect(await fakeEvents(second)).toHaveLength(eventCount);
    const clock = (await (await fetch(`${second.url}/_fake/clock`)).json()) as { offset_seconds: number };
    expect(clock.offset_seconds).toBe(3600);
  });

  it('finishes deliveries a previous run left pending', async () => {
    const stateFile = path.join(stateDirectory(), 'stripe.json');
    const down = await receiverFor(() => 503);
    const first = await fakeWith({ stateFile, webhookUrl: down.url, maxAttempts: 50 });
    await sdk(first).customers.create({ email: 'pending@example.test' });
    await down.waitFor(() => down.deliveries.length >= 1);
    await first.close();

    const up = await receiverFor();
    const second = await fakeWith({ stateFile, webhookUrl: up.url });
    const [event] = await up.waitFor((events) => events.length === 1);
    expect(event.type).toBe('customer.created');
    await drain(second);
    expect((await fakeEvents(second))[0].status).toBe('delivered');
  });

  it('starts empty after /_fake/reset', async () => {
    const stateFile = path.join(stateDirectory(), 'stripe.json');
    const fake = await fakeWith({ stateFile });
    const customer = await sdk(fake).customers.create({ email: 'reset@example.test' });
    const response = await fetch(`${fake.url}/_fake/reset`, { method: 'POST' });
    expect(response.status).toBe(200);
    await expect(sdk(fake).customers.retrieve(customer.id)).rejects.toMatchObject({ statusCode: 404 });
    expect(await fakeEvents(fake)).toEqual([]);
    expect(existsSync(stateFile)).toBe(true);
    expect(JSON.parse(readFileSync(stateFile, 'utf8')).customers).toEqual([]);
  });
});
