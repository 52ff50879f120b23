import { createServer } from 'node:http';
import type { AddressInfo } from 'node:net';
import Stripe from 'stripe';
import type { PaymentForm } from './cards';

/**
 * Helpers for tests that drive the fake: a loopback webhook receiver that verifies signatures
 * with the SDK, and a submitter for the hosted payment form.
 */
export interface WebhookReceiver {
  url: string;
  /** Events whose signature verified, in arrival order (retries included). */
  events: Stripe.Event[];
  /** Every POST that arrived, verified or not. */
  deliveries: { status: number; signature: string; rawBody: string }[];
  /** Resolves with the verified events once `predicate` holds, or rejects after `timeoutMs`. */
  waitFor(predicate: (events: Stripe.Event[]) => boolean, timeoutMs?: number): Promise<Stripe.Event[]>;
  close(): Promise<void>;
}

export async function startWebhookReceiver(options: {
  secret: string;
  /** Status to answer a verified delivery with; `deliveryNumber` counts from 1 across all deliveries. */
  statusFor?: (deliveryNumber: number, event: Stripe.Event) => number;
}): Promise<WebhookReceiver> {
  const events: Stripe.Event[] = [];
  const deliveries: WebhookReceiver['deliveries'] = [];
  const waiters = new Set<() => void>();
  const server = createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on('data', (chunk: Buffer) => chunks.push(chunk));
    req.on('end', () => {
      const rawBody = Buffer.concat(chunks).toString('utf8');
      const signature = String(req.headers['stripe-signature'] ?? '');
      let status: number;
      try {
        const event = Stripe.webhooks.constructEvent(rawBody, signature, options.secret);
        status = options.statusFor?.(deliveries.length + 1, event) ?? 200;
        if (status >= 200 && status < 300) events.push(event);
      } catch {
        status = 400;
      }
      deliveries.push({ status, signature, rawBody });
      res.statusCode = status;
      res.end();
      for (const waiter of waiters) waiter();
    });
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', () => resolve()));
  const { port } = server.address() as AddressInfo;

  return {
    url: `http://127.0.0.1:${port}/webhooks/stripe`,
    events,
    deliveries,
    waitFor(predicate, timeoutMs = 5000) {
      if (predicate(events)) return Promise.resolve(events);
      return new Promise((resolve, reject) => {
        const check = () => {
          if (!predicate(events)) return;
          cleanUp();
          resolve(events);
        };
        const timer = setTimeout(() => {
          cleanUp();
          reject(new Error(`Webhooks did not arrive in ${timeoutMs} ms; got: ${events.map((event) => event.type).join(', ') || 'none'}`));
        }, timeoutMs);
        const cleanUp = () => {
          clearTimeout(timer);
          waiters.delete(check);
        };
        waiters.add(check);
      });
    },
    close: () =>
      new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      }),
  };
}

export const TEST_CARD_SUCCESS = '4242 4242 4242 4242';
export const TEST_CARD_DECLINED = '4000 0000 0000 0002';

/** POSTs the hosted payment form at a Checkout Session's `url` without following the redirect. */
export function submitPaymentForm(sessionUrl: string, fields: PaymentForm = {}): Promise<Response> {
  const form: Required<Omit<PaymentForm, 'email'>> & Pick<PaymentForm, 'email'> = {
    cardholder_name: 'Avery Quill',
    card_number: TEST_CARD_SUCCESS,
    card_expiry: '12 / 39',
    card_cvc: '123',
    email: 'avery.quill@example.test',
    ...fields,
  };
  return fetch(sessionUrl, {
    method: 'POST',
    headers: { 'content-type': 'application/x-www-form-urlencoded' },
    body: new URLSearchParams(Object.entries(form).filter((entry): entry is [string, string] => entry[1] !== undefined)),
    redirect: 'manual',
  });
}
