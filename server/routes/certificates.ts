import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import type { NextFunction, Request, Response } from 'express';
import {
  BATCH_CSV_MAX_BYTES, CERTIFICATE_PDF_MAX_BYTES, batchParams, grantBody, grantParams, lookupsQuery, numberParams, operatorCertificatesQuery, reissueBody, revokeBody,
} from '../../shared/certificates';
import type { AppContext } from '../context';
import { HttpError } from '../middleware/errors';
import { windowLimiter } from '../middleware/rate-limit';
import { evidenceFor, grantAccess, grantsForAuditor, listGrants, withdrawGrant } from '../services/certificate-evidence';
import {
  certificatePdfFor, listCertificatesForOperator, listMyCertificates, reissueCertificate, requireNumber, revokeCertificate,
} from '../services/certificates';
import { batchCsv, checkFile, hashIp, listLookups, runBatch, verifyNumber } from '../services/verification';
import { singleFileUpload } from './company-admin';
import type { RouteDef } from './types';

const actorOf = (req: Request) => ({ userId: req.user?.id ?? null, ip: req.ip });

function tooManyChecks(_req: Request, _res: Response, next: NextFunction) {
  next(new HttpError(429, 'rate_limited', 'Too many certificate checks from this address in a short time. Wait a minute and try again.'));
}

/** Certificates, the public check, the auditor's tools, evidence grants and the operator's corrections. */
export function certificateRoutes(ctx: AppContext): RouteDef[] {
  const { windowMs, max } = ctx.config.verifyRateLimit;
  // Public checks share one budget per caller address, so numbers cannot be guessed at speed.
  const publicCheckLimiter = windowLimiter({ windowMs, limit: max, key: (req) => ipKeyGenerator(req.ip ?? ''), onLimited: tooManyChecks });
  const batchLimiter = rateLimit({ windowMs, limit: Math.max(10, Math.ceil(max / 6)), standardHeaders: 'draft-7', legacyHeaders: false, keyGenerator: (req) => req.user?.id ?? ipKeyGenerator(req.ip ?? ''), handler: tooManyChecks });
  const caller = (req: Request) => ({ userId: req.user?.id ?? null, ipHash: hashIp(req.ip, ctx.config.sessionSecret) });
  const noStore = (res: Response) => res.setHeader('Cache-Control', 'no-store');

  return [
    // Public ------------------------------------------------------------------------------------
    {
      method: 'get', path: '/api/verify/:number', access: 'public', before: [publicCheckLimiter], params: numberParams,
      summary: 'Check a certificate number: status, holder, area and dates (no e-mail, no company)',
      handler: async (req, res) => {
        noStore(res);
        return verifyNumber(ctx.knex, req.valid.params.number, caller(req), ctx.readCache);
      },
    },
    {
      method: 'post', path: '/api/verify/file', access: 'public',
      before: [publicCheckLimiter, singleFileUpload('file', CERTIFICATE_PDF_MAX_BYTES, 'certificate PDF')],
      summary: 'Is this PDF exactly a file that was issued? (multipart field "file", at most 5 MB)',
      handler: async (req, res) => {
        noStore(res);
        const { sha256: _sha256, ...answer } = await checkFile(ctx.knex, req.file!.buffer, caller(req));
        return answer;
      },
    },

    // The signed-in member ----------------------------------------------------------------------
    {
      method: 'get', path: '/api/certificates/mine', access: 'signed-in', summary: 'My certificates, current ones first',
      handler: async (req) => ({ certificates: await listMyCertificates(ctx.knex, ctx.config.appUrl, req.user!.id) }),
    },
    {
      method: 'get', path: '/api/certificates/:number/pdf', access: 'signed-in', params: numberParams,
      summary: "A certificate's PDF exactly as issued (the holder, their company's admins and managers, operators)",
      handler: async (req, res) => {
        const row = await certificatePdfFor(ctx.knex, requireNumber(req.valid.params.number), req.user!);
        res.setHeader('Content-Type', 'application/pdf');
        res.setHeader('Content-Disposition', `attachment; filename="plumewright-certificate-${row.number}.pdf"`);
        res.setHeader('Cache-Control', 'private, no-store');
        res.setHeader('ETag', `"${row.pdf_sha256}"`);
        res.end(row.pdf);
      },
    },

    // Auditors ----------------------------------------------------------------------------------
    {
      method: 'post', path: '/api/audit/batch', access: ['auditor'],
      before: [batchLimiter, singleFileUpload('file', BATCH_CSV_MAX_BYTES, 'CSV file')],
      summary: 'Check a CSV of certificate numbers (multipart field "file", at most 1 MB and 5,000 rows)',
      handler: (req) => runBatch(ctx.knex, req.file!.buffer, req.file!.originalname || null, { userId: req.user!.id, ipHash: hashIp(req.ip, ctx.config.sessionSecret) }),
    },
    {
      method: 'get', path: '/api/audit/batches/:batchId/csv', access: ['auditor'], params: batchParams, summary: 'The results of one of my batches as CSV',
      handler: async (req, res) => {
        const { csv, fileName } = await batchCsv(ctx.knex, req.valid.params.batchId, req.user!.id);
        res.setHeader('Content-Type', 'text/csv; charset=utf-8');
        res.setHeader('Content-Disposition', `attachment; filename="${fileName}"`);
        res.setHeader('Cache-Control', 'private, no-store');
        res.send(csv);
      },
    },
    {
      method: 'get', path: '/api/audit/lookups', access: ['auditor'], query: lookupsQuery, summary: 'My own verification lookups, newest first',
      handler: (req) => listLookups(ctx.knex, req.user!.id, req.valid.query),
    },
    {
      method: 'get', path: '/api/audit/grants', access: ['auditor'], summary: 'Companies that let me (or my firm) see their exam evidence',
      handler: async (req) => ({ grants: await grantsForAuditor(ctx.knex, { userId: req.user!.id, companyId: req.membership!.companyId }) }),
    },
    {
      method: 'get', path: '/api/audit/certificates/:number/evidence', access: ['auditor'], params: numberParams,
      summary: "The exam behind a certificate (date, score, duration), where the holder's company granted access",
      handler: async (req) => ({
        evidence: await evidenceFor(ctx.knex, requireNumber(req.valid.params.number), { userId: req.user!.id, companyId: req.membership!.companyId, ip: req.ip }),
      }),
    },

    // Company admins: who may see the evidence --------------------------------------------------
    {
      method: 'get', path: '/api/company/auditor-grants', access: ['admin'], summary: 'Auditors and firms that may see our exam evidence',
      handler: async (req) => ({ grants: await listGrants(ctx.knex, req.membership!.companyId) }),
    },
    {
      method: 'post', path: '/api/company/auditor-grants', access: ['admin'], body: grantBody,
      summary: 'Let an auditor (by e-mail), or everyone at their firm, see our exam evidence',
      handler: async (req, res) => {
        res.status(201);
        return { grant: await grantAccess(ctx.knex, req.membership!.companyId, req.valid.body, actorOf(req)) };
      },
    },
    {
      method: 'delete', path: '/api/company/auditor-grants/:grantId', access: ['admin'], params: grantParams, summary: 'Withdraw an evidence grant at once',
      handler: async (req, res) => {
        await withdrawGrant(ctx.knex, req.membership!.companyId, req.valid.params.grantId, actorOf(req));
        res.status(204).end();
      },
    },

    // Operators ---------------------------------------------------------------------------------
    {
      method: 'get', path: '/api/operator/certificates', access: ['operator'], query: operatorCertificatesQuery,
      summary: 'Every certificate, searched by number or holder and filtered by status (paged)',
      handler: (req) => listCertificatesForOperator(ctx.knex, req.valid.query),
    },
    {
      method: 'post', path: '/api/operator/certificates/:number/revoke', access: ['operator'], params: numberParams, body: revokeBody,
      summary: 'Revoke a certificate with a reason; the public check shows it at once',
      handler: async (req) => ({ certificate: await revokeCertificate(ctx.knex, requireNumber(req.valid.params.number), req.valid.body.reason, actorOf(req)) }),
    },
    {
      method: 'post', path: '/api/operator/certificates/:number/reissue', access: ['operator'], params: numberParams, body: reissueBody,
      summary: 'Re-issue after a name correction: a new number, the old certificate superseded',
      handler: async (req, res) => {
        res.status(201);
        return reissueCertificate(ctx, requireNumber(req.valid.params.number), req.valid.body, actorOf(req));
      },
    },
  ];
}
