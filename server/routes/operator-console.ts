import type { AppContext } from '../context';
import { operatorCompaniesQuery, operatorCompanyParams, paymentEventParams, paymentEventsQuery } from '../../shared/operator-console';
import { companyDetail, listCompanies, listPaymentEvents, paymentEvent } from '../services/operator-console';
import type { RouteDef } from './types';

/*
 * The company in the path is named `:id`, not `:companyId`: operators look at every company, and a
 * `:companyId` route runs under the caller's membership of that company.
 */
export function operatorConsoleRoutes(ctx: AppContext): RouteDef[] {
  return [
    {
      method: 'get', path: '/api/operator/company-subscriptions', access: ['operator'],
      summary: 'Every company with its members, seats and subscription: paged, sorted and searched on the server',
      query: operatorCompaniesQuery,
      handler: (req) => listCompanies(ctx.knex, req.valid.query),
    },
    {
      method: 'get', path: '/api/operator/company-subscriptions/:id', access: ['operator'],
      summary: "One company's seats and subscription, its recent subscription changes and payment events",
      params: operatorCompanyParams,
      handler: (req) => companyDetail(ctx.knex, req.valid.params.id),
    },
    {
      method: 'get', path: '/api/operator/payment-events', access: ['operator'],
      summary: 'The payment webhook log: every event received, filtered by type and state, paged',
      query: paymentEventsQuery,
      handler: (req) => listPaymentEvents(ctx.knex, req.valid.query),
    },
    {
      method: 'get', path: '/api/operator/payment-events/:eventId', access: ['operator'],
      summary: 'One payment event with its stored payload',
      params: paymentEventParams,
      handler: (req) => paymentEvent(ctx.knex, req.valid.params.eventId),
    },
  ];
}
