import Stripe from 'stripe';
import type { AppConfig } from '../config';
import { HttpError } from '../middleware/errors';
import type { PlanView, SeatInterval } from '../../shared/billing';

/**
 * The one money path: Stripe's official SDK. With STRIPE_API_URL set (npm start and the tests set it
 * to our local fake) the client talks to that host; without it, to Stripe itself. Nothing else in
 * the app knows which one it is.
 */
const clients = new WeakMap<AppConfig['stripe'], Stripe>();

export function createStripeClient(settings: AppConfig['stripe']): Stripe {
  if (settings.host) {
    return new Stripe(settings.secretKey, {
      host: settings.host,
      port: settings.port,
      protocol: settings.protocol,
      maxNetworkRetries: 1,
      timeout: 15_000,
    });
  }
  return new Stripe(settings.secretKey, { maxNetworkRetries: 2, timeout: 30_000 });
}

/** The secret key the config falls back to; only the local fake accepts it. */
const PLACEHOLDER_KEY = 'sk_test_local_fake';

/** The app's single client for this configuration, made on first use. */
export function stripeFor(config: AppConfig): Stripe {
  if (!config.stripe.host && config.stripe.secretKey === PLACEHOLDER_KEY) {
    // Without STRIPE_API_URL the SDK would call Stripe itself, which a placeholder key cannot use.
    throw new HttpError(503, 'payment_unconfigured', 'Payments are not set up on this server: set STRIPE_API_URL for the local payment fake, or real Stripe keys.');
  }
  let client = clients.get(config.stripe);
  if (!client) {
    client = createStripeClient(config.stripe);
    clients.set(config.stripe, client);
  }
  return client;
}

// ---- Seat prices ---------------------------------------------------------------------------------

export const SEAT_PRODUCT_ID = 'plumewright-crew-seat';
export const SEAT_PRODUCT_NAME = 'Plumewright crew seat';
export const SEAT_CURRENCY = 'usd';
export const SEAT_PRICES: Record<SeatInterval, { lookupKey: string; unitAmount: number; nickname: string }> = {
  month: { lookupKey: 'plumewright-seat-monthly', unitAmount: 1800, nickname: 'Crew seat, monthly' },
  year: { lookupKey: 'plumewright-seat-yearly', unitAmount: 18000, nickname: 'Crew seat, yearly' },
};

export interface SeatPrice extends PlanView {
  priceId: string;
}

export type SeatPriceCatalogue = Record<SeatInterval, SeatPrice>;

const catalogues = new WeakMap<Stripe, Promise<SeatPriceCatalogue>>();

/**
 * The per-seat monthly and yearly prices, created on first use if the account has none yet.
 * Idempotent: prices are found by lookup key first, and a race with another process creating them
 * ends with both reading the same prices. Called lazily at the first checkout or plan lookup (and by
 * the demo billing seed at start), not in syncOnStart, which the benchmark runs without the fake.
 */
export function ensureSeatPrices(stripe: Stripe): Promise<SeatPriceCatalogue> {
  let pending = catalogues.get(stripe);
  if (!pending) {
    pending = loadOrCreatePrices(stripe);
    catalogues.set(stripe, pending);
    // A failed attempt (the payment service was down) must not be remembered.
    pending.catch(() => catalogues.delete(stripe));
  }
  return pending;
}

async function findPrices(stripe: Stripe): Promise<Partial<Record<SeatInterval, Stripe.Price>>> {
  const keys = Object.values(SEAT_PRICES).map((p) => p.lookupKey);
  const list = await stripe.prices.list({ lookup_keys: keys, active: true, limit: 10 });
  const found: Partial<Record<SeatInterval, Stripe.Price>> = {};
  for (const interval of Object.keys(SEAT_PRICES) as SeatInterval[]) {
    const price = list.data.find((p) => p.lookup_key === SEAT_PRICES[interval].lookupKey);
    if (price) found[interval] = price;
  }
  return found;
}

async function ensureProduct(stripe: Stripe): Promise<string> {
  try {
    return (await stripe.products.retrieve(SEAT_PRODUCT_ID)).id;
  } catch (error) {
    if ((error as { statusCode?: number }).statusCode !== 404) throw error;
  }
  try {
    return (await stripe.products.create({ id: SEAT_PRODUCT_ID, name: SEAT_PRODUCT_NAME, unit_label: 'seat' })).id;
  } catch (error) {
    // Another process created it between our look and our create.
    if ((error as { statusCode?: number }).statusCode === 400) return (await stripe.products.retrieve(SEAT_PRODUCT_ID)).id;
    throw error;
  }
}

async function loadOrCreatePrices(stripe: Stripe): Promise<SeatPriceCatalogue> {
  let found = await findPrices(stripe);
  const missing = (Object.keys(SEAT_PRICES) as SeatInterval[]).filter((interval) => !found[interval]);
  if (missing.length) {
    const product = await ensureProduct(stripe);
    for (const interval of missing) {
      const spec = SEAT_PRICES[interval];
      try {
        await stripe.prices.create({
          product,
          currency: SEAT_CURRENCY,
          unit_amount: spec.unitAmount,
          recurring: { interval },
          lookup_key: spec.lookupKey,
          nickname: spec.nickname,
        });
      } catch (error) {
        // The lookup key was claimed by a concurrent start; the re-read below picks that price up.
        if ((error as { statusCode?: number }).statusCode !== 400) throw error;
      }
    }
    found = await findPrices(stripe);
  }
  const catalogue = {} as SeatPriceCatalogue;
  for (const interval of Object.keys(SEAT_PRICES) as SeatInterval[]) {
    const price = found[interval];
    if (!price) throw new Error(`The ${interval}ly seat price could not be found or created.`);
    catalogue[interval] = {
      priceId: price.id,
      name: SEAT_PRODUCT_NAME,
      interval,
      unitAmount: price.unit_amount ?? 0,
      currency: price.currency,
    };
  }
  return catalogue;
}

/** The plan a mirrored price id stands for, from the catalogue (or the API for an older price). */
export async function planForPrice(stripe: Stripe, priceId: string | null): Promise<PlanView | null> {
  if (!priceId) return null;
  const catalogue = await ensureSeatPrices(stripe);
  const known = Object.values(catalogue).find((p) => p.priceId === priceId);
  if (known) return { name: known.name, interval: known.interval, unitAmount: known.unitAmount, currency: known.currency };
  const price = await stripe.prices.retrieve(priceId);
  const interval: string | undefined = price.recurring?.interval;
  if (interval !== 'month' && interval !== 'year') return null;
  return { name: SEAT_PRODUCT_NAME, interval, unitAmount: price.unit_amount ?? 0, currency: price.currency };
}

/** True when an error came from the payment service being unreachable or failing, not from our request. */
export function isPaymentServiceDown(error: unknown): boolean {
  const e = error as { type?: string; statusCode?: number } | undefined;
  return e?.type === 'StripeConnectionError' || e?.type === 'StripeAPIError' || (e?.statusCode ?? 0) >= 500;
}

/**
 * Runs one call to the payment service and turns its failures into our error shape: unreachable
 * or failing → 503 (nothing changed, try again); anything else it refuses → 502, logged by the caller.
 */
export async function viaStripe<T>(what: string, call: () => Promise<T>, logger?: { warn: (obj: object, msg: string) => void }): Promise<T> {
  try {
    return await call();
  } catch (error) {
    if (error instanceof HttpError) throw error;
    if (isPaymentServiceDown(error)) {
      throw new HttpError(503, 'payment_unavailable', `The payment service is not answering, so ${what} did not happen. Nothing was charged or changed; try again in a minute.`);
    }
    const stripeError = error as { type?: string; message?: string };
    if (typeof stripeError.type === 'string' && stripeError.type.startsWith('Stripe')) {
      logger?.warn({ err: error }, `payment service refused: ${what}`);
      throw Object.assign(new HttpError(502, 'payment_error', `The payment service refused the request, so ${what} did not happen. Nothing was charged or changed.`), { cause: error });
    }
    throw error;
  }
}
