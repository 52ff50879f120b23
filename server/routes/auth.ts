import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import type { NextFunction, Request, Response } from 'express';
import { activeCompanyBody, loginBody, passwordChangeBody, resetConfirmBody, resetRequestBody } from '../../shared/auth';
import type { AppContext } from '../context';
import { HttpError, badRequest, notFound } from '../middleware/errors';
import { recordAudit } from '../services/audit';
import { hashPassword, verifyPassword } from '../services/passwords';
import { confirmPasswordReset, requestPasswordReset } from '../services/password-reset';
import { loadSessionUser, meResponse } from '../services/users';
import type { RouteDef } from './types';

function tooManyAttempts(_req: Request, _res: Response, next: NextFunction) {
  next(new HttpError(429, 'too_many_attempts', 'Too many sign-in attempts. Wait a few minutes and try again.'));
}

export function authRoutes(ctx: AppContext): RouteDef[] {
  const { windowMs, max } = ctx.config.loginRateLimit;
  const loginLimiter = rateLimit({
    windowMs,
    limit: max,
    standardHeaders: 'draft-7',
    legacyHeaders: false,
    // Count failures per address and per account, so neither spraying nor one-account guessing works.
    keyGenerator: (req) => `${ipKeyGenerator(req.ip ?? '')}|${String(req.body?.email ?? '').toLowerCase()}`,
    skipSuccessfulRequests: true,
    handler: tooManyAttempts,
  });
  const resetLimiter = rateLimit({ windowMs, limit: max, standardHeaders: 'draft-7', legacyHeaders: false, handler: tooManyAttempts });

  const login = (req: Request, res: Response) =>
    new Promise<unknown>((resolve, reject) => {
      ctx.passport!.authenticate('local', (err: unknown, user: Express.User | false) => {
        if (err) return reject(err);
        if (!user) {
          void recordAudit(ctx.knex, { action: 'sign-in.failed', details: { email: req.valid.body.email }, ip: req.ip }).catch(() => undefined);
          res.status(401).json({ error: { code: 'bad_credentials', message: 'That e-mail and password do not match an account.' } });
          return resolve(undefined);
        }
        // passport regenerates the session id here, so a planted session id is never promoted.
        req.logIn(user, (loginErr) => {
          if (loginErr) return reject(loginErr);
          req.session.activeCompanyId = user.memberships[0]?.companyId;
          void recordAudit(ctx.knex, { actorUserId: user.id, action: 'sign-in', ip: req.ip }).catch(() => undefined);
          resolve(meResponse(user, req.session.activeCompanyId));
        });
      })(req, res);
    });

  return [
    {
      method: 'get', path: '/api/auth/csrf', access: 'public', summary: 'A CSRF token for the x-csrf-token header',
      handler: (req, res) => {
        // Saving the session pins its id, which the token is bound to.
        req.session.csrfReady = true;
        return { csrfToken: res.locals.generateCsrfToken(req, res) };
      },
    },
    { method: 'post', path: '/api/auth/login', access: 'public', summary: 'Sign in', body: loginBody, before: [loginLimiter], handler: login },
    {
      method: 'post', path: '/api/auth/logout', access: 'public', summary: 'Sign out and destroy the session',
      handler: (req, res) =>
        new Promise<void>((resolve, reject) => {
          const userId = req.user?.id;
          req.logout((err) => {
            if (err) return reject(err);
            req.session.destroy((destroyErr) => {
              if (destroyErr) return reject(destroyErr);
              res.clearCookie('pw.sid', { path: '/' });
              if (userId) void recordAudit(ctx.knex, { actorUserId: userId, action: 'sign-out', ip: req.ip }).catch(() => undefined);
              res.status(204).end();
              resolve();
            });
          });
        }),
    },
    { method: 'get', path: '/api/auth/me', access: 'signed-in', summary: 'The signed-in user and memberships', handler: (req) => meResponse(req.user!, req.session.activeCompanyId) },
    {
      method: 'post', path: '/api/auth/active-company', access: 'signed-in', summary: 'Switch the active company', body: activeCompanyBody,
      handler: (req) => {
        const { companyId } = req.valid.body;
        if (!req.user!.memberships.some((m) => m.companyId === companyId)) throw notFound('Company');
        req.session.activeCompanyId = companyId;
        return meResponse(req.user!, companyId);
      },
    },
    {
      method: 'post', path: '/api/auth/password', access: 'signed-in', summary: 'Change my password', body: passwordChangeBody,
      handler: async (req, res) => {
        const { currentPassword, newPassword } = req.valid.body;
        const row = await ctx.knex('users').where({ id: req.user!.id }).first('password_hash');
        if (!(await verifyPassword(row?.password_hash ?? null, currentPassword))) {
          throw badRequest('The current password is not correct.', [{ field: 'currentPassword', message: 'currentPassword: is not correct' }]);
        }
        if (currentPassword === newPassword) {
          throw badRequest('Choose a password different from the current one.', [{ field: 'newPassword', message: 'newPassword: must differ from the current password' }]);
        }
        const passwordHash = await hashPassword(newPassword);
        await ctx.knex.transaction(async (trx) => {
          await trx('users').where({ id: req.user!.id }).update({ password_hash: passwordHash, password_changed_at: trx.fn.now(), updated_at: trx.fn.now() });
          // Other sessions of this user end; this one stays.
          await trx('session').whereRaw("sess->'passport'->>'user' = ?", [req.user!.id]).whereNot('sid', req.sessionID).del();
          await recordAudit(trx, { actorUserId: req.user!.id, action: 'password.changed', targetType: 'user', targetId: req.user!.id, ip: req.ip });
        });
        res.status(204).end();
      },
    },
    {
      method: 'post', path: '/api/auth/password-reset', access: 'public', summary: 'E-mail a password reset link', body: resetRequestBody, before: [resetLimiter],
      handler: async (req, res) => {
        await requestPasswordReset(ctx, req.valid.body.email, req.ip);
        res.status(202).json({ message: 'If that address has an account, a reset link is on its way.' });
      },
    },
    {
      method: 'post', path: '/api/auth/password-reset/confirm', access: 'public', summary: 'Set a new password with a reset token', body: resetConfirmBody, before: [resetLimiter],
      handler: async (req, res) => {
        await confirmPasswordReset(ctx, req.valid.body.token, req.valid.body.password, req.ip);
        res.status(204).end();
      },
    },
  ];
}

export { loadSessionUser };
