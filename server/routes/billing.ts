import type { Request } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import { z } from 'zod';
import { checkoutBody, seatQuantityBody, signupBody, type PlansResponse } from '../../shared/billing';
import type { MeResponse } from '../../shared/roles';
import type { AppContext } from '../context';
import { HttpError } from '../middleware/errors';
import {
  billingPortalUrl, billingSummary, changeSeatQuantity, checkoutStatus, listInvoices, setCancelAtPeriodEnd, signUp, startCheckout,
} from '../services/billing';
import { ensureSeatPrices, stripeFor, viaStripe } from '../services/stripe';
import { loadSessionUser, meResponse } from '../services/users';
import { receiveEvent, verifyWebhook } from '../services/webhooks';
import type { RouteDef } from './types';

/** Signs a freshly created or joined account in (a new session id, as at sign-in) with this company active. */
export function signInAs(req: Request, ctx: AppContext, userId: string, companyId: string): Promise<MeResponse> {
  return new Promise((resolve, reject) => {
    loadSessionUser(ctx.knex, userId)
      .then((user) => {
        if (!user) return reject(new Error('The new account could not be loaded.'));
        req.logIn(user, (err) => {
          if (err) return reject(err);
          req.session.activeCompanyId = companyId;
          resolve(meResponse(user, companyId));
        });
      })
      .catch(reject);
  });
}

const actorOf = (req: Request) => ({ userId: req.user?.id, ip: req.ip });

export function billingRoutes(ctx: AppContext): RouteDef[] {
  const { windowMs, max } = ctx.config.loginRateLimit;
  // Each sign-up creates a customer at the payment service; a few per address per window is plenty.
  const signupLimiter = rateLimit({
    windowMs,
    limit: max,
    standardHeaders: 'draft-7',
    legacyHeaders: false,
    keyGenerator: (req) => ipKeyGenerator(req.ip ?? ''),
    handler: (_req, _res, next) => next(new HttpError(429, 'too_many_attempts', 'Too many sign-ups from this address. Wait a few minutes and try again.')),
  });
  return [
    {
      method: 'get', path: '/api/billing/plans', access: 'public', summary: 'Per-seat prices, monthly and yearly',
      handler: async (): Promise<PlansResponse> => {
        const catalogue = await viaStripe('loading prices', () => ensureSeatPrices(stripeFor(ctx.config)), ctx.logger);
        return { plans: [catalogue.month, catalogue.year].map(({ name, interval, unitAmount, currency }) => ({ name, interval, unitAmount, currency })) };
      },
    },
    {
      method: 'post', path: '/api/signup', access: 'public', summary: 'Sign a new company up: company, first admin (signed in) and a checkout for its seats',
      body: signupBody, before: [signupLimiter],
      handler: async (req, res) => {
        const created = await signUp(ctx, req.valid.body, req.ip);
        const me = await signInAs(req, ctx, created.userId, created.companyId);
        res.status(201).json({ checkoutUrl: created.checkoutUrl, me });
      },
    },
    {
      method: 'get', path: '/api/billing', access: ['admin'], summary: 'Seats (total, used, queued) and the subscription',
      handler: (req) => billingSummary(ctx, req.membership!.companyId),
    },
    {
      method: 'put', path: '/api/billing/seats', access: ['admin'], summary: 'Change the number of seats (409 below the seats in use)',
      body: seatQuantityBody,
      handler: (req) => changeSeatQuantity(ctx, req.membership!.companyId, req.valid.body.seats, actorOf(req)),
    },
    {
      method: 'post', path: '/api/billing/cancel', access: ['admin'], summary: 'Cancel at the end of the paid period',
      handler: (req) => setCancelAtPeriodEnd(ctx, req.membership!.companyId, true, actorOf(req)),
    },
    {
      method: 'post', path: '/api/billing/resume', access: ['admin'], summary: 'Keep a subscription that was set to cancel',
      handler: (req) => setCancelAtPeriodEnd(ctx, req.membership!.companyId, false, actorOf(req)),
    },
    {
      method: 'post', path: '/api/billing/portal', access: ['admin'], summary: "A link to the payment service's billing portal",
      handler: (req) => billingPortalUrl(ctx, req.membership!.companyId),
    },
    {
      method: 'get', path: '/api/billing/invoices', access: ['admin'], summary: 'Invoices, newest first (12 a page)',
      query: z.object({ startingAfter: z.string().regex(/^in_[A-Za-z0-9_]+$/, 'must be an invoice id').optional() }),
      handler: (req) => listInvoices(ctx, req.membership!.companyId, req.valid.query.startingAfter),
    },
    {
      method: 'post', path: '/api/billing/checkout', access: ['admin'], summary: 'A payment page for a company without an active subscription',
      body: checkoutBody,
      handler: async (req, res) => {
        res.status(201).json(await startCheckout(ctx, req.membership!.companyId, req.valid.body.seats, req.valid.body.interval, actorOf(req)));
      },
    },
    {
      method: 'get', path: '/api/billing/checkout/:sessionId', access: ['admin'], summary: 'Whether a payment page the browser returned from was paid',
      params: z.object({ sessionId: z.string().regex(/^cs_[A-Za-z0-9_]+$/, 'must be a checkout session id').max(200, 'is too long') }),
      handler: (req) => checkoutStatus(ctx, req.membership!.companyId, req.valid.params.sessionId),
    },
    {
      method: 'post', path: '/api/webhooks/stripe', access: 'public', summary: 'Stripe webhook (signed; raw body)',
      handler: async (req) => {
        const event = verifyWebhook(ctx, req.body, req.get('stripe-signature'));
        const outcome = await receiveEvent(ctx, event);
        return { received: true, outcome };
      },
    },
  ];
}
