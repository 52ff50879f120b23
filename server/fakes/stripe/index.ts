import { createServer } from 'node:http';
import type { AddressInfo } from 'node:net';
import express, { type Express, type Request } from 'express';
import Stripe from 'stripe';
import { IdempotencyCache, createApiRouter } from './api';
import { Billing, type ProrationBehavior } from './billing';
import { createControlRouter } from './control';
import { createPagesRouter } from './pages';
import { FakeStore } from './store';
import { WebhookSender, type RetryOptions } from './webhooks';

export { signatureHeader, type RetryOptions } from './webhooks';
export { SUCCESS_CARDS, DECLINE_CARDS } from './cards';

export interface StripeFakeOptions {
  /** JSON file the state is saved to after every change and loaded from at start. Omit to keep state in memory. */
  stateFile?: string;
  /** Where events are POSTed. Omit to record events without sending them. */
  webhookUrl?: string;
  /** Signing secret shared with the app (`whsec_...`), used for the `Stripe-Signature` header. */
  webhookSecret: string;
  /** Origin used in `url`, `hosted_invoice_url` and portal links; defaults to the Host the request came to. */
  publicBaseUrl?: string;
  /** Milliseconds since the epoch, like Date.now; `/_fake/advance-clock` adds to it. */
  clock?: () => number;
  retry?: RetryOptions;
  /** Name shown on the hosted pages and invoices. */
  merchantName?: string;
  /** How seat changes made in the fake billing portal are billed. */
  portalProrationBehavior?: ProrationBehavior;
}

export interface StripeFake {
  app: Express;
  state: FakeStore;
  webhooks: WebhookSender;
  billing: Billing;
  /** Origin for links in API objects; when unset, the Host each request came to. */
  publicBaseUrl: string | undefined;
  /** Stops retry timers. The state is already on disk. */
  stop(): void;
}

export function createStripeFake(options: StripeFakeOptions): StripeFake {
  if (!options.webhookSecret) throw new Error('createStripeFake needs a webhookSecret.');
  const state = new FakeStore(options.stateFile, options.clock ?? Date.now);
  const webhooks = new WebhookSender(state, {
    url: options.webhookUrl,
    secret: options.webhookSecret,
    apiVersion: Stripe.API_VERSION,
    retry: options.retry,
  });
  const merchantName = options.merchantName ?? 'Plumewright';
  const billing = new Billing(state, webhooks, merchantName);
  const idempotency = new IdempotencyCache();
  const baseUrlOf = (req: Request) => (handle.publicBaseUrl ?? `${req.protocol}://${req.get('host')}`).replace(/\/+$/, '');

  const app = express();
  app.disable('x-powered-by');
  app.set('query parser', 'extended'); // Stripe's bracket notation in GET and DELETE query strings
  app.use('/v1', createApiRouter({ store: state, billing, idempotency, baseUrlOf }));
  app.use('/_fake', createControlRouter({ store: state, billing, webhooks, idempotency, baseUrlOf }));
  app.use(
    createPagesRouter({
      store: state,
      billing,
      merchantName,
      portalProrationBehavior: options.portalProrationBehavior ?? 'create_prorations',
      baseUrlOf,
    }),
  );
  app.get('/', (_req, res) => {
    res.json({ name: 'Plumewright local Stripe fake', api: '/v1', helpers: '/_fake' });
  });
  const handle: StripeFake = { app, state, webhooks, billing, publicBaseUrl: options.publicBaseUrl, stop: () => webhooks.stop() };
  webhooks.resumePending();
  return handle;
}

export interface StartedStripeFake {
  url: string;
  port: number;
  state: FakeStore;
  fake: StripeFake;
  close(): Promise<void>;
}

/** Starts the fake on loopback. Port 0 picks a free port; `url` is then the real one. */
export async function startStripeFake(options: StripeFakeOptions & { port?: number; host?: string }): Promise<StartedStripeFake> {
  const host = options.host ?? '127.0.0.1';
  const fake = createStripeFake(options);
  const server = createServer(fake.app);
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(options.port ?? 0, host, () => resolve());
  });
  const port = (server.address() as AddressInfo).port;
  const url = `http://${host}:${port}`;
  // Links in API objects point where a browser reaches the fake, whatever Host header the SDK sent.
  fake.publicBaseUrl ??= url;
  return {
    url,
    port,
    state: fake.state,
    fake,
    close: async () => {
      fake.stop();
      await new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      });
    },
  };
}
