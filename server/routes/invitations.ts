import type { Request } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import { z } from 'zod';
import { ROSTER_MAX_BYTES, acceptInvitationBody, invitationLookupBody, invitationsQuery, inviteBody } from '../../shared/billing';
import type { AppContext } from '../context';
import { HttpError } from '../middleware/errors';
import {
  acceptInvitation, createInvitation, listInvitations, lookupInvitation, resendInvitation, revokeInvitation,
} from '../services/invitations';
import { importRoster, previewRoster, rosterProgress, rosterTemplateCsv } from '../services/roster';
import { signInAs } from './billing';
import { singleFileUpload } from './company-admin';
import type { RouteDef } from './types';

const invitationParams = z.object({ invitationId: z.uuid({ error: 'must be an invitation id' }) });
const importParams = z.object({ importId: z.uuid({ error: 'must be a roster import id' }) });
const actorOf = (req: Request) => ({ userId: req.user?.id, ip: req.ip });

/** The uploaded file's name, for the preview and the audit log only; never used to decide anything. */
const fileNameOf = (req: Request) => (req.file?.originalname ?? 'roster.csv').replace(/[^\w .()-]/g, '_').slice(0, 120) || 'roster.csv';

export function invitationRoutes(ctx: AppContext): RouteDef[] {
  const { windowMs, max } = ctx.config.loginRateLimit;
  // Guessing tokens is hopeless (256 bits), but the accept route also checks passwords of existing accounts.
  const acceptLimiter = rateLimit({
    windowMs,
    limit: max,
    standardHeaders: 'draft-7',
    legacyHeaders: false,
    keyGenerator: (req) => ipKeyGenerator(req.ip ?? ''),
    skipSuccessfulRequests: true,
    handler: (_req, _res, next) => next(new HttpError(429, 'too_many_attempts', 'Too many attempts. Wait a few minutes and try again.')),
  });
  const rosterUpload = singleFileUpload('roster', ROSTER_MAX_BYTES, 'roster file');

  return [
    {
      method: 'post', path: '/api/invitations/lookup', access: 'public', summary: 'What an invitation link is for (company, name, e-mail), or why it no longer works',
      body: invitationLookupBody, before: [acceptLimiter],
      handler: (req) => lookupInvitation(ctx.knex, req.valid.body.token),
    },
    {
      method: 'post', path: '/api/invitations/accept', access: 'public', summary: 'Accept an invitation: set name and password (or confirm an existing account), join, sign in',
      body: acceptInvitationBody, before: [acceptLimiter],
      handler: async (req) => {
        const result = await acceptInvitation(ctx, req.valid.body.token, req.valid.body, req.ip);
        const me = await signInAs(req, ctx, result.userId, result.companyId);
        return { me, companyId: result.companyId, seat: result.seat, queuePosition: result.queuePosition };
      },
    },
    {
      method: 'get', path: '/api/company/invitations', access: ['admin'], summary: "The company's invitations (paged; open by default)",
      query: invitationsQuery,
      handler: (req) => listInvitations(ctx.knex, req.membership!.companyId, req.valid.query),
    },
    {
      method: 'post', path: '/api/company/invitations', access: ['admin'], summary: 'Invite one person by e-mail',
      body: inviteBody,
      handler: async (req, res) => {
        res.status(201).json({ invitation: await createInvitation(ctx, req.membership!.companyId, req.valid.body, actorOf(req)) });
      },
    },
    {
      method: 'post', path: '/api/company/invitations/:invitationId/resend', access: ['admin'], summary: 'Send an invitation again with a fresh link and expiry',
      params: invitationParams,
      handler: async (req) => ({ invitation: await resendInvitation(ctx, req.membership!.companyId, req.valid.params.invitationId, actorOf(req)) }),
    },
    {
      method: 'delete', path: '/api/company/invitations/:invitationId', access: ['admin'], summary: 'Withdraw an open invitation',
      params: invitationParams,
      handler: async (req, res) => {
        await revokeInvitation(ctx, req.membership!.companyId, req.valid.params.invitationId, actorOf(req));
        res.status(204).end();
      },
    },
    {
      method: 'get', path: '/api/company/roster/template', access: ['admin'], summary: 'A roster CSV template to fill in',
      handler: (_req, res) => {
        res.setHeader('Content-Disposition', 'attachment; filename="plumewright-roster-template.csv"');
        res.type('text/csv; charset=utf-8').send(rosterTemplateCsv());
      },
    },
    {
      method: 'post', path: '/api/company/roster/preview', access: ['admin'], summary: 'Check a roster CSV (multipart field "roster"): every row with what would happen and its problems',
      before: [rosterUpload],
      handler: (req) => previewRoster(ctx.knex, req.membership!.companyId, req.file!.buffer, fileNameOf(req)),
    },
    {
      method: 'post', path: '/api/company/roster/import', access: ['admin'], summary: 'Import a roster CSV: all invitations or none; e-mails go out in the background',
      before: [rosterUpload],
      handler: async (req, res) => {
        res.status(201).json(await importRoster(ctx, req.membership!.companyId, req.file!.buffer, fileNameOf(req), actorOf(req)));
      },
    },
    {
      method: 'get', path: '/api/company/roster/imports/:importId', access: ['admin'], summary: "How far a roster import's e-mails are",
      params: importParams,
      handler: (req) => rosterProgress(ctx, req.membership!.companyId, req.valid.params.importId),
    },
  ];
}
