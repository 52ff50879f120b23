import type { Request, RequestHandler } from 'express';
import multer from 'multer';
import { z } from 'zod';
import { LOGO_MAX_BYTES, membersQuery, moveSeatBody } from '../../shared/billing';
import type { AppContext } from '../context';
import { HttpError } from '../middleware/errors';
import { companySummary } from '../services/billing';
import { deleteLogo, getCompanyLogo, saveLogo } from '../services/logos';
import { assignSeat, listMembersWithSeats, mySeat, removeMember, unassignSeat } from '../services/seats';
import type { RouteDef } from './types';

const formatSize = (bytes: number) => (bytes >= 1024 * 1024 ? `${bytes / (1024 * 1024)} MB` : `${Math.round(bytes / 1024)} KB`);

/**
 * One uploaded file in multipart field `field`, kept in memory, at most `maxBytes`: larger is 413,
 * a missing file or stray fields are 400, each naming the field.
 */
export function singleFileUpload(field: string, maxBytes: number, what: string): RequestHandler {
  const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: maxBytes, files: 1, fields: 10, parts: 12 } }).single(field);
  return (req, res, next) => {
    upload(req, res, (err: unknown) => {
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE') {
          return next(new HttpError(413, 'too_large', `The ${what} is larger than ${formatSize(maxBytes)}, the most this upload takes.`, [
            { field, message: `${field}: is larger than ${formatSize(maxBytes)}` },
          ]));
        }
        const message = err.code === 'LIMIT_UNEXPECTED_FILE' ? `send the file in the form field "${field}"` : `the upload was refused (${err.message})`;
        return next(new HttpError(400, 'bad_upload', `The upload could not be read: ${message}.`, [{ field, message: `${field}: ${message}` }]));
      }
      if (err) return next(err);
      if (!req.file) {
        return next(new HttpError(400, 'file_missing', `Choose a ${what} to upload.`, [{ field, message: `${field}: no file was uploaded; send it as the multipart form field "${field}"` }]));
      }
      next();
    });
  };
}

const userParams = z.object({ userId: z.uuid({ error: 'must be a member id' }) });
const companyParams = z.object({ companyId: z.uuid({ error: 'must be a company id' }) });
const actorOf = (req: Request) => ({ userId: req.user?.id, ip: req.ip });

/** A 1×1 transparent PNG: the answer for a company without a logo, so an <img> shows nothing rather than an error. */
const NO_LOGO = Buffer.from('iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAQAAAC1HAwCAAAAC0lEQVR42mNkYAAAAAYAAjCB0C8AAAAASUVORK5CYII=', 'base64');

export function companyAdminRoutes(ctx: AppContext): RouteDef[] {
  return [
    {
      method: 'get', path: '/api/company/summary', access: ['admin'], summary: 'The company page header: seats, subscription, logo, open invitations',
      handler: (req) => companySummary(ctx, req.membership!.companyId),
    },
    {
      method: 'get', path: '/api/company/members', access: ['admin'], summary: 'Members with seat status and queue place (paged, sorted, filtered)',
      query: membersQuery,
      handler: (req) => listMembersWithSeats(ctx.knex, req.membership!.companyId, req.valid.query),
    },
    {
      method: 'post', path: '/api/company/members/:userId/seat', access: ['admin'], summary: 'Give a member a seat (a free one, or moved from fromUserId)',
      params: userParams, body: moveSeatBody,
      handler: (req) => assignSeat(ctx.knex, req.membership!.companyId, req.valid.params.userId, { fromUserId: req.valid.body.fromUserId, ...actorOf(req) }),
    },
    {
      method: 'delete', path: '/api/company/members/:userId/seat', access: ['admin'], summary: "Take a member's seat back (it goes to the queue's front), or take them out of the queue",
      params: userParams,
      handler: (req) => unassignSeat(ctx.knex, req.membership!.companyId, req.valid.params.userId, actorOf(req)),
    },
    {
      method: 'delete', path: '/api/company/members/:userId', access: ['admin'], summary: 'Remove a member from the company (their account and certificates stay theirs)',
      params: userParams,
      handler: (req) => removeMember(ctx.knex, req.membership!.companyId, req.valid.params.userId, actorOf(req)),
    },
    {
      method: 'get', path: '/api/company/my-seat', access: ['admin', 'manager', 'crew'], summary: 'My seat in the active company',
      handler: (req) => mySeat(ctx.knex, req.membership!.companyId, req.user!.id),
    },
    {
      method: 'post', path: '/api/company/logo', access: ['admin'], summary: 'Upload the company logo (PNG or JPEG, at most 1 MB; multipart field "logo")',
      before: [singleFileUpload('logo', LOGO_MAX_BYTES, 'logo')],
      handler: async (req) => ({ logo: await saveLogo(ctx.knex, req.membership!.companyId, req.file!.buffer, actorOf(req)) }),
    },
    {
      method: 'delete', path: '/api/company/logo', access: ['admin'], summary: 'Remove the company logo',
      handler: async (req, res) => {
        await deleteLogo(ctx.knex, req.membership!.companyId, actorOf(req));
        res.status(204).end();
      },
    },
    {
      method: 'get', path: '/api/companies/:companyId/logo', access: ['admin', 'manager', 'crew'], summary: "The company's logo image (a transparent pixel when it has none)",
      params: companyParams,
      handler: async (req, res) => {
        const logo = await getCompanyLogo(ctx.knex, req.membership!.companyId);
        res.setHeader('Cache-Control', 'private, no-cache');
        res.setHeader('Content-Security-Policy', "default-src 'none'");
        if (!logo) {
          res.setHeader('X-Logo', 'none');
          return void res.type('image/png').send(NO_LOGO);
        }
        res.setHeader('Last-Modified', logo.updatedAt.toUTCString());
        res.type(logo.mime).send(logo.bytes);
      },
    },
  ];
}
