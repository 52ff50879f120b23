import crypto from 'node:crypto';
import type { Knex } from 'knex';
import {
  INVITATION_VALID_DAYS,
  type AcceptInvitationResult,
  type InvitationLookup,
  type InvitationState,
  type InvitationView,
  type SeatStatus,
} from '../../shared/billing';
import { PASSWORD_MIN } from '../../shared/auth';
import type { AppContext } from '../context';
import { HttpError, conflict, notFound } from '../middleware/errors';
import { invitationMail } from '../mail/templates';
import { recordAudit } from './audit';
import { hashPassword, verifyPassword } from './passwords';
import { requestSeat, type Actor } from './seats';

/**
 * Invitations: an admin invites a person by e-mail to join the company with some roles. The e-mail
 * carries a single-use link whose token is stored only as its SHA-256; the link expires after
 * INVITATION_VALID_DAYS. Accepting creates (or joins) the account, adds the membership and, for
 * crew members, asks for a seat, all in one transaction.
 */

export const sha256 = (value: string) => crypto.createHash('sha256').update(value).digest('hex');

export interface InvitationRow {
  id: string;
  company_id: string;
  email: string;
  name: string;
  roles: string[];
  crew: string | null;
  token_hash: string | null;
  expires_at: Date | null;
  sent_at: Date | null;
  send_error: string | null;
  accepted_at: Date | null;
  accepted_user_id: string | null;
  revoked_at: Date | null;
  invited_by: string | null;
  roster_import_id: string | null;
  created_at: Date;
}

export function invitationState(row: Pick<InvitationRow, 'accepted_at' | 'revoked_at' | 'expires_at' | 'sent_at' | 'send_error'>, now = new Date()): InvitationState {
  if (row.accepted_at) return 'accepted';
  if (row.revoked_at) return 'revoked';
  if (row.send_error && !row.sent_at) return 'failed';
  if (row.expires_at && row.expires_at.getTime() <= now.getTime()) return 'expired';
  return 'pending';
}

function toView(row: InvitationRow & { invited_by_name?: string | null }): InvitationView {
  return {
    id: row.id,
    name: row.name,
    email: row.email,
    roles: row.roles,
    crew: row.crew,
    state: invitationState(row),
    sentAt: row.sent_at?.toISOString() ?? null,
    expiresAt: row.expires_at?.toISOString() ?? null,
    acceptedAt: row.accepted_at?.toISOString() ?? null,
    sendError: row.send_error,
    invitedBy: row.invited_by_name ?? null,
  };
}

/** Refuses an invitation to someone who is already a member, or already has an open invitation. */
export async function assertInvitable(db: Knex | Knex.Transaction, companyId: string, email: string) {
  const member = await db('memberships as m').join('users as u', 'u.id', 'm.user_id').where({ 'm.company_id': companyId, 'u.email': email }).first('u.name');
  if (member) {
    throw new HttpError(409, 'already_member', `${email} is already a member of the company.`, [{ field: 'email', message: 'email: already a member of the company' }]);
  }
  const open = await db('invitations').where({ company_id: companyId, email }).whereNull('accepted_at').whereNull('revoked_at').first('id');
  if (open) {
    throw new HttpError(409, 'already_invited', `${email} already has an open invitation. Resend it from the invitations list instead.`, [
      { field: 'email', message: 'email: already invited; resend the open invitation instead' },
    ]);
  }
}

const uniqueViolation = (error: unknown) => (error as { code?: string }).code === '23505';

export async function createInvitation(
  ctx: AppContext,
  companyId: string,
  input: { name: string; email: string; roles: string[]; crew?: string | null },
  actor: Actor = {},
): Promise<InvitationView> {
  const id = await ctx.knex.transaction(async (trx) => {
    await assertInvitable(trx, companyId, input.email);
    let row: { id: string };
    try {
      [row] = await trx('invitations')
        .insert({ company_id: companyId, email: input.email, name: input.name, roles: input.roles, crew: input.crew ?? null, invited_by: actor.userId ?? null })
        .returning('id');
    } catch (error) {
      if (uniqueViolation(error)) throw conflict(`${input.email} was invited a moment ago by someone else.`);
      throw error;
    }
    await recordAudit(trx, { actorUserId: actor.userId, companyId, action: 'invitation.created', targetType: 'invitation', targetId: row.id, details: { email: input.email, roles: input.roles }, ip: actor.ip });
    return row.id;
  });
  await deliverInvitation(ctx, id);
  return getInvitation(ctx.knex, companyId, id);
}

export async function getInvitation(knex: Knex, companyId: string, invitationId: string): Promise<InvitationView> {
  const row = await knex('invitations as i')
    .leftJoin('users as u', 'u.id', 'i.invited_by')
    .where({ 'i.id': invitationId, 'i.company_id': companyId })
    .first('i.*', 'u.name as invited_by_name');
  if (!row) throw notFound('Invitation');
  return toView(row);
}

/**
 * Sends (or re-sends) an invitation with a fresh token: the new hash replaces the old one, so an
 * earlier link stops working, and the expiry starts again. A failed send is recorded on the row.
 */
export async function deliverInvitation(ctx: AppContext, invitationId: string): Promise<boolean> {
  const token = crypto.randomBytes(32).toString('base64url');
  const expiresAt = new Date(Date.now() + INVITATION_VALID_DAYS * 24 * 60 * 60 * 1000);
  const [row] = await ctx.knex('invitations')
    .where({ id: invitationId })
    .whereNull('accepted_at')
    .whereNull('revoked_at')
    .update({ token_hash: sha256(token), expires_at: expiresAt, send_error: null, updated_at: ctx.knex.fn.now() })
    .returning(['id', 'company_id', 'email', 'name', 'roles', 'invited_by']);
  if (!row) return false;
  const company = await ctx.knex('companies').where({ id: row.company_id }).first('name');
  const inviter = row.invited_by ? await ctx.knex('users').where({ id: row.invited_by }).first('name') : undefined;
  const mail = invitationMail({
    name: row.name,
    companyName: company.name,
    inviterName: inviter?.name ?? null,
    roles: row.roles,
    url: `${ctx.config.appUrl}/invitations/${token}`,
    expiresAt,
  });
  try {
    await ctx.mailer.send({ to: row.email, ...mail });
  } catch (error) {
    ctx.logger.warn({ err: error, invitationId }, 'invitation mail failed');
    await ctx.knex('invitations').where({ id: invitationId }).update({ send_error: String((error as Error).message ?? error).slice(0, 300), updated_at: ctx.knex.fn.now() });
    return false;
  }
  await ctx.knex('invitations').where({ id: invitationId }).update({ sent_at: ctx.knex.fn.now(), send_error: null, updated_at: ctx.knex.fn.now() });
  return true;
}

export async function resendInvitation(ctx: AppContext, companyId: string, invitationId: string, actor: Actor = {}) {
  const row = await ctx.knex('invitations').where({ id: invitationId, company_id: companyId }).first();
  if (!row) throw notFound('Invitation');
  if (row.accepted_at) throw conflict(`${row.name} already accepted this invitation.`);
  if (row.revoked_at) throw conflict('This invitation was withdrawn. Invite the person again instead.');
  await recordAudit(ctx.knex, { actorUserId: actor.userId, companyId, action: 'invitation.resent', targetType: 'invitation', targetId: invitationId, details: { email: row.email }, ip: actor.ip });
  await deliverInvitation(ctx, invitationId);
  return getInvitation(ctx.knex, companyId, invitationId);
}

export async function revokeInvitation(ctx: AppContext, companyId: string, invitationId: string, actor: Actor = {}) {
  await ctx.knex.transaction(async (trx) => {
    const [row] = await trx('invitations')
      .where({ id: invitationId, company_id: companyId })
      .whereNull('accepted_at')
      .whereNull('revoked_at')
      .update({ revoked_at: trx.fn.now(), updated_at: trx.fn.now() })
      .returning(['id', 'email']);
    if (!row) {
      const exists = await trx('invitations').where({ id: invitationId, company_id: companyId }).first('accepted_at');
      if (!exists) throw notFound('Invitation');
      throw conflict(exists.accepted_at ? 'This invitation was already accepted; remove the member instead.' : 'This invitation was already withdrawn.');
    }
    await recordAudit(trx, { actorUserId: actor.userId, companyId, action: 'invitation.revoked', targetType: 'invitation', targetId: invitationId, details: { email: row.email }, ip: actor.ip });
  });
}

export async function listInvitations(
  knex: Knex,
  companyId: string,
  query: { page: number; pageSize: number; q?: string; state: 'open' | InvitationState },
): Promise<{ invitations: InvitationView[]; total: number }> {
  const base = knex('invitations as i').where('i.company_id', companyId);
  if (query.q) {
    const like = `%${query.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    base.where((q) => q.whereILike('i.name', like).orWhereILike('i.email', like).orWhereILike('i.crew', like));
  }
  const now = knex.fn.now();
  const expired = (q: Knex.QueryBuilder) => q.whereNull('i.accepted_at').whereNull('i.revoked_at').whereNotNull('i.expires_at').where('i.expires_at', '<=', now);
  switch (query.state) {
    case 'open':
      base.whereNull('i.accepted_at').whereNull('i.revoked_at');
      break;
    case 'pending':
      base.whereNull('i.accepted_at').whereNull('i.revoked_at').where((q) => q.whereNull('i.expires_at').orWhere('i.expires_at', '>', now));
      break;
    case 'expired':
      expired(base);
      break;
    case 'failed':
      base.whereNull('i.accepted_at').whereNull('i.revoked_at').whereNull('i.sent_at').whereNotNull('i.send_error');
      break;
    case 'accepted':
      base.whereNotNull('i.accepted_at');
      break;
    case 'revoked':
      base.whereNotNull('i.revoked_at');
      break;
  }
  const [{ count }] = await base.clone().count<{ count: number }[]>('* as count');
  const rows = await base
    .leftJoin('users as u', 'u.id', 'i.invited_by')
    .orderBy([{ column: 'i.created_at', order: 'desc' }, { column: 'i.id' }])
    .limit(query.pageSize)
    .offset((query.page - 1) * query.pageSize)
    .select('i.*', 'u.name as invited_by_name');
  return { invitations: rows.map(toView), total: Number(count) };
}

// ---- Accepting ------------------------------------------------------------------------------------

function gone(code: string, message: string) {
  return new HttpError(410, code, message, [{ field: 'token', message: `token: ${message}` }]);
}

const ASK_ADMIN = 'Ask your company admin to resend the invitation; the new e-mail has a fresh link.';

async function findByToken(knex: Knex | Knex.Transaction, token: string) {
  const row = await knex('invitations as i')
    .join('companies as c', 'c.id', 'i.company_id')
    .where('i.token_hash', sha256(token))
    .first('i.*', 'c.name as company_name');
  if (!row) {
    throw new HttpError(404, 'invitation_unknown', `This invitation link is not valid: it may be incomplete, or a newer invitation replaced it. Check that you opened the latest e-mail. ${ASK_ADMIN}`, [
      { field: 'token', message: 'token: this invitation link is not valid or was replaced by a newer one' },
    ]);
  }
  return row as InvitationRow & { company_name: string };
}

function assertOpen(row: InvitationRow) {
  const state = invitationState(row);
  if (state === 'accepted') throw gone('invitation_used', `This invitation was already accepted. If that was you, sign in with ${row.email}. If not, ${ASK_ADMIN.charAt(0).toLowerCase()}${ASK_ADMIN.slice(1)}`);
  if (state === 'revoked') throw gone('invitation_revoked', `This invitation was withdrawn by the company. If you still need access, ${ASK_ADMIN.charAt(0).toLowerCase()}${ASK_ADMIN.slice(1)}`);
  if (state === 'expired') {
    const when = row.expires_at!.toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });
    throw gone('invitation_expired', `This invitation expired on ${when}. ${ASK_ADMIN}`);
  }
}

export async function lookupInvitation(knex: Knex, token: string): Promise<InvitationLookup> {
  const row = await findByToken(knex, token);
  assertOpen(row);
  const account = await knex('users').where({ email: row.email }).first('id');
  return { companyName: row.company_name, email: row.email, name: row.name, roles: row.roles, expiresAt: row.expires_at!.toISOString(), hasAccount: Boolean(account) };
}

/**
 * Accepts an invitation. New people choose a password (their name defaults to the one invited);
 * people who already have an account confirm it with their password. The claim of the invitation,
 * the account, the membership and the seat request commit together; the seat request takes the
 * company's seat lock, so simultaneous acceptances can never hand out more seats than were paid for.
 */
export async function acceptInvitation(
  ctx: AppContext,
  token: string,
  input: { name?: string; password: string },
  ip?: string,
): Promise<AcceptInvitationResult & { userId: string }> {
  const invitation = await findByToken(ctx.knex, token);
  assertOpen(invitation);
  const existing = await ctx.knex('users').where({ email: invitation.email }).first('id', 'password_hash', 'disabled_at');
  let passwordHash: string | null = null;
  if (existing) {
    if (existing.disabled_at) throw new HttpError(409, 'account_disabled', 'The account for this e-mail address is disabled. Contact Plumewright support.');
    if (!(await verifyPassword(existing.password_hash, input.password))) {
      throw new HttpError(400, 'bad_password', 'That password does not match your existing Plumewright account.', [
        { field: 'password', message: `password: does not match the existing account for ${invitation.email}; use that account's password, or reset it from the sign-in page` },
      ]);
    }
  } else {
    if (input.password.length < PASSWORD_MIN) {
      throw new HttpError(400, 'invalid_input', `Choose a password of at least ${PASSWORD_MIN} characters.`, [
        { field: 'password', message: `password: must be at least ${PASSWORD_MIN} characters` },
      ]);
    }
    passwordHash = await hashPassword(input.password);
  }

  return ctx.knex.transaction(async (trx) => {
    // Claiming and everything that follows commit together, so a link works exactly once.
    const [claimed] = await trx('invitations')
      .where({ id: invitation.id, token_hash: sha256(token) })
      .whereNull('accepted_at')
      .whereNull('revoked_at')
      .where('expires_at', '>', trx.fn.now())
      .update({ accepted_at: trx.fn.now(), updated_at: trx.fn.now() })
      .returning(['id']);
    if (!claimed) throw gone('invitation_used', `This invitation was used a moment ago. If that was not you, ${ASK_ADMIN.charAt(0).toLowerCase()}${ASK_ADMIN.slice(1)}`);

    let userId: string;
    if (existing) {
      userId = existing.id;
    } else {
      try {
        const [user] = await trx('users')
          .insert({ email: invitation.email, name: input.name?.trim() || invitation.name, password_hash: passwordHash })
          .returning('id');
        userId = user.id;
      } catch (error) {
        if (uniqueViolation(error)) throw conflict('An account for this e-mail address was created a moment ago. Sign in, then open the invitation again.');
        throw error;
      }
    }
    const inserted = await trx('memberships')
      .insert({ user_id: userId, company_id: invitation.company_id, roles: invitation.roles, crew: invitation.crew })
      .onConflict(['user_id', 'company_id'])
      .ignore()
      .returning('id');
    await trx('invitations').where({ id: invitation.id }).update({ accepted_user_id: userId });
    await recordAudit(trx, {
      actorUserId: userId,
      companyId: invitation.company_id,
      action: 'invitation.accepted',
      targetType: 'invitation',
      targetId: invitation.id,
      details: { email: invitation.email, roles: invitation.roles, newAccount: !existing, alreadyMember: inserted.length === 0 },
      ip,
    });

    let seat: SeatStatus = 'none';
    let position: number | null = null;
    if (inserted.length && invitation.roles.includes('crew')) {
      ({ seat, queuePosition: position } = await requestSeat(trx, invitation.company_id, userId, { userId, ip }));
    } else if (!inserted.length) {
      const member = await trx('memberships').where({ user_id: userId, company_id: invitation.company_id }).first('seat_status');
      seat = member.seat_status;
    }
    return { userId, companyId: invitation.company_id, seat, queuePosition: position };
  });
}
