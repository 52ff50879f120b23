import type { RequestHandler } from 'express';
import type { Role } from '../../shared/roles';
import { forbidden, HttpError, notFound, unauthorized } from './errors';

/** Who may call a route: anyone, any signed-in user, or holders of one of these roles. */
export type Access = 'public' | 'signed-in' | readonly Role[];

/**
 * The one authorization gate, declared per route in the route table.
 * A route with a `:companyId` path parameter runs under that company's membership (another company's
 * id is a 404, so ids of other companies are never confirmed); otherwise under the active company.
 */
/**
 * For routes that start paid work (a drill or an exam attempt): a member of a customer company needs a
 * seat. Work already started can still be finished and read; lessons and calculators stay open.
 * The seat comes with the cached user (server/services/read-cache.ts), so this costs no query.
 */
export const requireSeat: RequestHandler = (req, _res, next) => {
  const m = req.membership;
  if (!m || m.companyKind !== 'customer' || m.seat) return next();
  next(new HttpError(403, 'no_seat', 'You do not hold a seat in your company yet, so drills and exams cannot start. Ask your company admin to assign you one on the Members page.'));
};

export function requireAccess(access: Access): RequestHandler {
  return (req, _res, next) => {
    if (access === 'public') return next();
    const user = req.user;
    if (!user) return next(unauthorized());
    if (access === 'signed-in') return next();

    const pathCompany = req.params?.companyId;
    const companyId = pathCompany ?? req.session.activeCompanyId ?? user.memberships[0]?.companyId;
    const membership = user.memberships.find((m) => m.companyId === companyId);
    if (!membership) return next(pathCompany ? notFound('Company') : forbidden('You are not a member of a company with this role.'));
    if (!membership.roles.some((r) => access.includes(r))) return next(forbidden());
    req.membership = { companyId: membership.companyId, roles: membership.roles, companyKind: membership.companyKind, seat: membership.seat };
    next();
  };
}
