import type { RequestHandler } from 'express';
import type { Role } from '../../shared/roles';
import { forbidden, notFound, unauthorized } from './errors';

/** Who may call a route: anyone, any signed-in user, or holders of one of these roles. */
export type Access = 'public' | 'signed-in' | readonly Role[];

/**
 * The one authorization gate, declared per route in the route table.
 * A route with a `:companyId` path parameter runs under that company's membership (another company's
 * id is a 404, so ids of other companies are never confirmed); otherwise under the active company.
 */
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
    req.membership = { companyId: membership.companyId, roles: membership.roles };
    next();
  };
}
