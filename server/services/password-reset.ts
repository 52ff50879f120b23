import crypto from 'node:crypto';
import type { AppContext } from '../context';
import { badRequest } from '../middleware/errors';
import { passwordResetMail } from '../mail/templates';
import { recordAudit } from './audit';
import { deliverQueuedEmails, queueEmails, withdrawUnsentEmails } from './email-log';
import { hashPassword } from './passwords';

export const RESET_VALID_MINUTES = 60;

export const sha256 = (value: string) => crypto.createHash('sha256').update(value).digest('hex');

/**
 * Creates a single-use token and mails its link. Says nothing about whether the address has an account.
 * The mail is queued with the token and sent at once; if the mail server is down, the request still
 * succeeds and the delivery job sends it when the server is back.
 */
export async function requestPasswordReset(ctx: AppContext, email: string, ip?: string) {
  const user = await ctx.knex('users').where({ email }).whereNull('disabled_at').first();
  if (!user) return;
  const token = crypto.randomBytes(32).toString('base64url');
  const mail = passwordResetMail(user.name, `${ctx.config.appUrl}/reset-password/${token}`, RESET_VALID_MINUTES);
  const queued = await ctx.knex.transaction(async (trx) => {
    // A new request retires any earlier unused link, and a mail with such a link still waiting to go out.
    await trx('password_reset_tokens').where({ user_id: user.id }).whereNull('used_at').update({ used_at: trx.fn.now() });
    await withdrawUnsentEmails(trx, { to: user.email, kind: 'password-reset' }, 'Not sent: a newer reset link replaced this one.');
    await trx('password_reset_tokens').insert({
      user_id: user.id,
      token_hash: sha256(token),
      expires_at: new Date(Date.now() + RESET_VALID_MINUTES * 60_000),
    });
    await recordAudit(trx, { actorUserId: user.id, action: 'password.reset-requested', targetType: 'user', targetId: user.id, ip });
    return queueEmails(trx, [{ to: user.email, kind: 'password-reset', ...mail }]);
  });
  await deliverQueuedEmails(ctx.knex, ctx.mailer, ctx.logger, { ids: queued });
}

export async function confirmPasswordReset(ctx: AppContext, token: string, password: string, ip?: string) {
  const passwordHash = await hashPassword(password);
  await ctx.knex.transaction(async (trx) => {
    // Claiming the token and changing the password commit together, so a link works exactly once.
    const claimed = await trx('password_reset_tokens')
      .where({ token_hash: sha256(token) })
      .whereNull('used_at')
      .where('expires_at', '>', trx.fn.now())
      .update({ used_at: trx.fn.now() })
      .returning(['user_id']);
    if (!claimed.length) {
      throw badRequest('This reset link has expired or was already used.', [
        { field: 'token', message: 'token: this reset link has expired or was already used; ask for a new one on the sign-in page.' },
      ]);
    }
    const userId = claimed[0].user_id;
    await trx('users').where({ id: userId }).update({ password_hash: passwordHash, password_changed_at: trx.fn.now(), updated_at: trx.fn.now() });
    // Whoever held a session on the old password loses it.
    await trx('session').whereRaw("sess->'passport'->>'user' = ?", [userId]).del();
    await recordAudit(trx, { actorUserId: userId, action: 'password.reset', targetType: 'user', targetId: userId, ip });
  });
}
