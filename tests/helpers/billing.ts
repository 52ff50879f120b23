import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import Stripe from 'stripe';
import { startStripeFake, type StartedStripeFake } from '../../server/fakes/stripe';
import { submitPaymentForm } from '../../server/fakes/stripe/test-support';
import { startTestServer, type RunningTestServer } from './server';

export const WEBHOOK_SECRET = 'whsec_plumewright_billing_tests';
export const STRIPE_KEY = 'sk_test_plumewright_billing_tests';

export interface HeldDelivery {
  body: string;
  signature: string;
  type: string;
  id: string;
}

/**
 * Sits between the payment fake and the app: passes webhook deliveries through, or, while `hold`
 * is on, keeps them (answering 200 to the fake) so a test can hand them to the app later, in any
 * order and as often as it likes.
 */
export interface WebhookGate {
  url: string;
  target: string;
  hold: boolean;
  held: HeldDelivery[];
  close(): Promise<void>;
}

async function startWebhookGate(): Promise<WebhookGate> {
  const gate: WebhookGate = { url: '', target: '', hold: false, held: [], close: async () => undefined };
  const server: Server = createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on('data', (c: Buffer) => chunks.push(c));
    req.on('end', async () => {
      const body = Buffer.concat(chunks).toString('utf8');
      const signature = String(req.headers['stripe-signature'] ?? '');
      if (gate.hold || !gate.target) {
        const event = JSON.parse(body) as { id: string; type: string };
        gate.held.push({ body, signature, type: event.type, id: event.id });
        res.statusCode = 200;
        return res.end();
      }
      try {
        const forwarded = await fetch(gate.target, { method: 'POST', headers: { 'content-type': 'application/json', 'stripe-signature': signature }, body });
        res.statusCode = forwarded.status;
        res.end(await forwarded.text());
      } catch {
        res.statusCode = 502;
        res.end();
      }
    });
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', () => resolve()));
  gate.url = `http://127.0.0.1:${(server.address() as AddressInfo).port}/gate`;
  gate.close = () =>
    new Promise<void>((resolve) => {
      server.close(() => resolve());
      server.closeAllConnections();
    });
  return gate;
}

export interface BillingStack {
  server: RunningTestServer;
  fake: StartedStripeFake;
  gate: WebhookGate;
  /** A client of our own on the fake, for checking what the app did there. */
  stripe: Stripe;
  /** Waits until the fake has no delivery running or scheduled. */
  drain(): Promise<void>;
  /** Moves the fake's clock forward and runs what fell due (renewals, period-end cancellations). */
  advanceClock(seconds: number): Promise<void>;
  /** Sends a held (or any) delivery to the app as the fake would; returns the HTTP status. */
  deliver(delivery: Pick<HeldDelivery, 'body' | 'signature'>): Promise<number>;
  close(): Promise<void>;
}

/** The app listening on loopback with its own database, and the payment fake on another port, wired both ways. */
export async function startBillingStack(): Promise<BillingStack> {
  const gate = await startWebhookGate();
  const fake = await startStripeFake({ port: 0, webhookSecret: WEBHOOK_SECRET, webhookUrl: gate.url, retry: { initialDelayMs: 100, maxDelayMs: 400, maxAttempts: 5 } });
  const server = await startTestServer({ STRIPE_API_URL: fake.url, STRIPE_WEBHOOK_SECRET: WEBHOOK_SECRET, STRIPE_SECRET_KEY: STRIPE_KEY });
  gate.target = `${server.url}/api/webhooks/stripe`;
  const stripe = new Stripe(STRIPE_KEY, { host: '127.0.0.1', port: fake.port, protocol: 'http', maxNetworkRetries: 0 });
  const drain = async () => {
    await fetch(`${fake.url}/_fake/webhooks/drain`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ timeout_ms: 20_000 }) });
  };
  return {
    server,
    fake,
    gate,
    stripe,
    drain,
    async advanceClock(seconds) {
      const res = await fetch(`${fake.url}/_fake/advance-clock`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ seconds }) });
      if (!res.ok) throw new Error(`advance-clock answered ${res.status}`);
      await drain();
    },
    async deliver({ body, signature }) {
      const res = await fetch(`${server.url}/api/webhooks/stripe`, { method: 'POST', headers: { 'content-type': 'application/json', 'stripe-signature': signature }, body });
      await res.arrayBuffer();
      return res.status;
    },
    async close() {
      await fake.close();
      await gate.close();
      await server.close();
    },
  };
}

/** Pays a checkout URL on the fake's hosted page with a test card; returns where the fake sends the browser. */
export async function payCheckout(checkoutUrl: string, card?: string): Promise<string> {
  const res = await submitPaymentForm(checkoutUrl, card ? { card_number: card } : {});
  if (res.status !== 303) throw new Error(`the payment page answered ${res.status}: ${(await res.text()).slice(0, 300)}`);
  return res.headers.get('location') ?? '';
}

/** Polls until `check` holds or the time is up (the machine is slow and shared). */
export async function eventually<T>(read: () => Promise<T>, check: (value: T) => boolean, timeoutMs = 20_000): Promise<T> {
  const until = Date.now() + timeoutMs;
  let value = await read();
  while (!check(value)) {
    if (Date.now() > until) return value;
    await new Promise((r) => setTimeout(r, 100));
    value = await read();
  }
  return value;
}
