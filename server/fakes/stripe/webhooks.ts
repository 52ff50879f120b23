import { createHmac } from 'node:crypto';
import type { StripeEvent } from './objects';
import { newId, type DeliveryAttempt, type EventRecord, type FakeStore } from './store';

export interface RetryOptions {
  /** Total tries per event, the first included. */
  maxAttempts?: number;
  /** Wait before the first retry; each further retry doubles it. */
  initialDelayMs?: number;
  maxDelayMs?: number;
  /** How long one POST to the webhook URL may take. */
  timeoutMs?: number;
}

const DEFAULT_RETRY: Required<RetryOptions> = {
  maxAttempts: 6,
  initialDelayMs: 1000,
  maxDelayMs: 60_000,
  timeoutMs: 10_000,
};

/**
 * Stripe's signing scheme: `t=<unix seconds>,v1=<hex HMAC-SHA256 of "<t>.<payload>" keyed by the secret>`,
 * which `stripe.webhooks.constructEvent` verifies.
 */
export function signatureHeader(payload: string, secret: string, timestampSeconds: number): string {
  const signature = createHmac('sha256', secret).update(`${timestampSeconds}.${payload}`).digest('hex');
  return `t=${timestampSeconds},v1=${signature}`;
}

export interface EmitOptions {
  previousAttributes?: Record<string, unknown>;
  requestId?: string | null;
  idempotencyKey?: string | null;
}

/**
 * Records events and POSTs them to the one configured endpoint. First attempts go out in
 * creation order; failures retry with doubling delays up to `maxAttempts`. The signature
 * timestamp is wall-clock time (not the fake's advanced clock) so the app's tolerance check passes.
 */
export class WebhookSender {
  private readonly retry: Required<RetryOptions>;
  private readonly timers = new Set<NodeJS.Timeout>();
  private chain: Promise<void> = Promise.resolve();
  private outstanding = 0;
  private idleWaiters: (() => void)[] = [];
  /** Bumped by `stop()` so work queued before a reset or close never runs. */
  private generation = 0;

  constructor(
    private readonly store: FakeStore,
    private readonly options: { url?: string; secret: string; apiVersion: string; retry?: RetryOptions },
  ) {
    this.retry = { ...DEFAULT_RETRY, ...options.retry };
  }

  emit(type: string, object: unknown, options: EmitOptions = {}): StripeEvent {
    const event: StripeEvent = {
      id: newId('evt_'),
      object: 'event',
      api_version: this.options.apiVersion,
      created: this.store.now(),
      data: {
        object: structuredClone(object),
        ...(options.previousAttributes ? { previous_attributes: structuredClone(options.previousAttributes) } : {}),
      },
      livemode: false,
      pending_webhooks: this.options.url ? 1 : 0,
      request: { id: options.requestId ?? null, idempotency_key: options.idempotencyKey ?? null },
      type,
    };
    const record: EventRecord = { event, status: this.options.url ? 'pending' : 'not_sent', attempts: [] };
    this.store.events.set(event.id, record);
    this.store.save();
    if (this.options.url) this.enqueue(record);
    return event;
  }

  /** Sends one more attempt now (for tests and manual replays) and reports how it went. */
  async resend(record: EventRecord): Promise<DeliveryAttempt> {
    if (!this.options.url) {
      return { at: Date.now(), statusCode: null, error: 'No webhook URL is configured.', durationMs: 0 };
    }
    this.outstanding++;
    try {
      const result = await this.attempt(record);
      if (!succeeded(result)) record.status = 'failed';
      this.store.save();
      return result;
    } finally {
      this.settle();
    }
  }

  /** Picks up deliveries a previous run left unfinished. */
  resumePending(): void {
    if (!this.options.url) return;
    for (const record of this.store.events.values()) {
      if (record.status === 'pending') this.enqueue(record);
    }
  }

  /** Resolves once no attempt is running or scheduled, or after `timeoutMs`; returns whether it went idle. */
  whenIdle(timeoutMs = 10_000): Promise<boolean> {
    if (this.outstanding === 0) return Promise.resolve(true);
    return new Promise((resolve) => {
      const timer = setTimeout(() => {
        this.idleWaiters = this.idleWaiters.filter((waiter) => waiter !== done);
        resolve(false);
      }, timeoutMs);
      const done = () => {
        clearTimeout(timer);
        resolve(true);
      };
      this.idleWaiters.push(done);
    });
  }

  /** Cancels queued and scheduled deliveries; used on close and reset. */
  stop(): void {
    this.generation++;
    for (const timer of this.timers) clearTimeout(timer);
    this.timers.clear();
    this.outstanding = 0;
    this.settle();
  }

  private enqueue(record: EventRecord): void {
    this.outstanding++;
    const generation = this.generation;
    this.chain = this.chain.then(() => this.attemptAndMaybeRetry(record, generation));
  }

  private async attemptAndMaybeRetry(record: EventRecord, generation: number): Promise<void> {
    if (generation !== this.generation) return;
    const result = await this.attempt(record);
    if (generation !== this.generation) return;
    const failed = !succeeded(result);
    if (failed && record.attempts.length < this.retry.maxAttempts) {
      const delay = Math.min(this.retry.initialDelayMs * 2 ** (record.attempts.length - 1), this.retry.maxDelayMs);
      const timer = setTimeout(() => {
        this.timers.delete(timer);
        this.chain = this.chain.then(() => this.attemptAndMaybeRetry(record, generation));
      }, delay);
      this.timers.add(timer);
      return; // still outstanding until the retry runs
    }
    if (failed) {
      record.status = 'failed';
      this.store.save();
    }
    this.settle();
  }

  private async attempt(record: EventRecord): Promise<DeliveryAttempt> {
    const generation = this.generation;
    const payload = JSON.stringify(record.event, null, 2);
    const started = Date.now();
    let attempt: DeliveryAttempt;
    try {
      const response = await fetch(this.options.url as string, {
        method: 'POST',
        headers: {
          'content-type': 'application/json; charset=utf-8',
          'stripe-signature': signatureHeader(payload, this.options.secret, Math.floor(started / 1000)),
          'user-agent': 'PlumewrightStripeFake/1.0',
        },
        body: payload,
        redirect: 'manual',
        signal: AbortSignal.timeout(this.retry.timeoutMs),
      });
      await response.arrayBuffer();
      attempt = { at: started, statusCode: response.status, error: null, durationMs: Date.now() - started };
    } catch (error) {
      const cause = (error as { cause?: { code?: string } }).cause;
      const message = cause?.code ?? (error instanceof Error ? error.message : String(error));
      attempt = { at: started, statusCode: null, error: message, durationMs: Date.now() - started };
    }
    // A reset or close while the request was in flight: the state this attempt belongs to is gone.
    if (generation !== this.generation || this.store.events.get(record.event.id) !== record) return attempt;
    record.attempts.push(attempt);
    if (succeeded(attempt)) record.status = 'delivered';
    this.store.save();
    return attempt;
  }

  private settle(): void {
    if (this.outstanding > 0) this.outstanding--;
    if (this.outstanding > 0) return;
    const waiters = this.idleWaiters;
    this.idleWaiters = [];
    for (const waiter of waiters) waiter();
  }
}

const succeeded = (attempt: DeliveryAttempt) =>
  attempt.statusCode !== null && attempt.statusCode >= 200 && attempt.statusCode < 300;
