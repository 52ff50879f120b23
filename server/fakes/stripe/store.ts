import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import type {
  CheckoutSession,
  Customer,
  Invoice,
  InvoiceItem,
  PortalSession,
  Price,
  Product,
  StripeEvent,
  Subscription,
} from './objects';
import type { Metadata } from './params';

const ID_ALPHABET = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz';

/** Stripe-looking ids: a type prefix and random base-62 characters, e.g. `cus_Q8b2...`. */
export function newId(prefix: string, length = 24): string {
  let id = prefix;
  for (const byte of randomBytes(length)) id += ID_ALPHABET[byte % ID_ALPHABET.length];
  return id;
}

/** What the hosted payment page needs that the public session object does not carry. */
export interface CheckoutDetails {
  lineItems: { id: string; price: string; quantity: number }[];
  subscriptionMetadata: Metadata;
  subscriptionDescription: string | null;
}

export interface DeliveryAttempt {
  /** Wall-clock milliseconds, not the fake's billing clock. */
  at: number;
  statusCode: number | null;
  error: string | null;
  durationMs: number;
}

export type DeliveryStatus = 'pending' | 'delivered' | 'failed' | 'not_sent';

export interface EventRecord {
  event: StripeEvent;
  status: DeliveryStatus;
  attempts: DeliveryAttempt[];
}

const STATE_VERSION = 1;

/** Everything the fake knows, in insertion order, saved as one JSON document. */
export class FakeStore {
  products = new Map<string, Product>();
  prices = new Map<string, Price>();
  customers = new Map<string, Customer>();
  checkoutSessions = new Map<string, CheckoutSession>();
  checkoutDetails = new Map<string, CheckoutDetails>();
  subscriptions = new Map<string, Subscription>();
  invoices = new Map<string, Invoice>();
  invoiceItems = new Map<string, InvoiceItem>();
  portalSessions = new Map<string, PortalSession>();
  events = new Map<string, EventRecord>();
  clockOffsetSeconds = 0;

  constructor(
    private readonly stateFile: string | undefined,
    private readonly clock: () => number,
  ) {
    if (stateFile && existsSync(stateFile)) this.load(stateFile);
  }

  /** The fake's "now" in Unix seconds: the injected clock plus any advance from the test helper. */
  now(): number {
    return Math.floor(this.clock() / 1000) + this.clockOffsetSeconds;
  }

  /** Looks an object up by its id prefix, for expansion. */
  findById(id: string): unknown {
    const byPrefix: [string, Map<string, unknown>][] = [
      ['prod_', this.products],
      ['price_', this.prices],
      ['cus_', this.customers],
      ['cs_', this.checkoutSessions],
      ['sub_', this.subscriptions],
      ['in_', this.invoices],
      ['ii_', this.invoiceItems],
      ['bps_', this.portalSessions],
    ];
    for (const [prefix, collection] of byPrefix) {
      if (id.startsWith(prefix)) return collection.get(id);
    }
    // Products may carry caller-chosen ids without the prefix.
    return this.products.get(id);
  }

  reset(): void {
    for (const collection of this.collections()) collection.clear();
    this.events.clear();
    this.clockOffsetSeconds = 0;
    this.save();
  }

  /** Writes the whole state to a temporary file and renames it over the old one, so a crash never leaves half a file. */
  save(): void {
    if (!this.stateFile) return;
    const document = {
      version: STATE_VERSION,
      clockOffsetSeconds: this.clockOffsetSeconds,
      products: [...this.products.values()],
      prices: [...this.prices.values()],
      customers: [...this.customers.values()],
      checkoutSessions: [...this.checkoutSessions.values()],
      checkoutDetails: [...this.checkoutDetails.entries()],
      subscriptions: [...this.subscriptions.values()],
      invoices: [...this.invoices.values()],
      invoiceItems: [...this.invoiceItems.values()],
      portalSessions: [...this.portalSessions.values()],
      events: [...this.events.values()],
    };
    mkdirSync(path.dirname(this.stateFile), { recursive: true });
    const temporary = `${this.stateFile}.${process.pid}.${randomBytes(4).toString('hex')}.tmp`;
    writeFileSync(temporary, JSON.stringify(document));
    renameSync(temporary, this.stateFile);
  }

  private load(file: string): void {
    let document;
    try {
      document = JSON.parse(readFileSync(file, 'utf8'));
    } catch (error) {
      throw new Error(`The Stripe fake state file ${file} is not valid JSON; move it aside to start fresh.`, { cause: error });
    }
    if (document?.version !== STATE_VERSION) {
      throw new Error(`The Stripe fake state file ${file} has version ${document?.version}; expected ${STATE_VERSION}.`);
    }
    const byId = <T extends { id: string }>(items: T[] | undefined) => new Map((items ?? []).map((item) => [item.id, item]));
    this.clockOffsetSeconds = Number(document.clockOffsetSeconds) || 0;
    this.products = byId(document.products);
    this.prices = byId(document.prices);
    this.customers = byId(document.customers);
    this.checkoutSessions = byId(document.checkoutSessions);
    this.checkoutDetails = new Map(document.checkoutDetails ?? []);
    this.subscriptions = byId(document.subscriptions);
    this.invoices = byId(document.invoices);
    this.invoiceItems = byId(document.invoiceItems);
    this.portalSessions = byId(document.portalSessions);
    this.events = new Map(((document.events ?? []) as EventRecord[]).map((record) => [record.event.id, record]));
  }

  private collections(): Map<string, unknown>[] {
    return [
      this.products,
      this.prices,
      this.customers,
      this.checkoutSessions,
      this.checkoutDetails,
      this.subscriptions,
      this.invoices,
      this.invoiceItems,
      this.portalSessions,
    ];
  }
}
