import express, { type Request, type Router } from 'express';
import type { IdempotencyCache } from './api';
import type { Billing } from './billing';
import type { FakeStore } from './store';
import type { WebhookSender } from './webhooks';

/**
 * Test helpers under `/_fake`, outside Stripe's API: move the clock, inspect and resend webhook
 * deliveries, wait for deliveries to settle, and wipe the state. No API key needed.
 */
export function createControlRouter(deps: {
  store: FakeStore;
  billing: Billing;
  webhooks: WebhookSender;
  idempotency: IdempotencyCache;
  baseUrlOf: (req: Request) => string;
}): Router {
  const { store, billing, webhooks } = deps;
  const router = express.Router();
  router.use(express.json(), express.urlencoded({ extended: false }));

  router.get('/clock', (_req, res) => {
    res.json({ now: store.now(), offset_seconds: store.clockOffsetSeconds });
  });

  router.post('/advance-clock', (req, res) => {
    const seconds = Number(req.body?.seconds);
    if (!Number.isInteger(seconds) || seconds < 0) {
      res.status(400).json({ error: { type: 'invalid_request_error', message: 'seconds must be a whole number, 0 or more.', param: 'seconds' } });
      return;
    }
    const events = billing.advanceClock(seconds, { baseUrl: deps.baseUrlOf(req) });
    res.json({ now: store.now(), offset_seconds: store.clockOffsetSeconds, events: events.map(({ id, type }) => ({ id, type })) });
  });

  router.get('/events', (req, res) => {
    const type = typeof req.query.type === 'string' ? req.query.type : undefined;
    const data = [...store.events.values()]
      .filter((record) => !type || record.event.type === type)
      .map((record) => ({ id: record.event.id, type: record.event.type, status: record.status, attempts: record.attempts, event: record.event }));
    res.json({ object: 'list', data });
  });

  router.post('/resend/:eventId', async (req, res) => {
    const record = store.events.get(req.params.eventId);
    if (!record) {
      res.status(404).json({ error: { type: 'invalid_request_error', code: 'resource_missing', message: `No such event: '${req.params.eventId}'`, param: 'id' } });
      return;
    }
    const attempt = await webhooks.resend(record);
    res.json({ id: record.event.id, status: record.status, attempt });
  });

  /** Waits (up to timeout_ms, default 10 s) until no delivery is running or waiting for a retry. */
  router.post('/webhooks/drain', async (req, res) => {
    const timeoutMs = Math.min(Number(req.body?.timeout_ms) || 10_000, 60_000);
    res.json({ idle: await webhooks.whenIdle(timeoutMs) });
  });

  router.post('/reset', (_req, res) => {
    webhooks.stop();
    deps.idempotency.clear();
    store.reset();
    res.json({ reset: true });
  });

  return router;
}
