import { z } from 'zod';

export const PASSWORD_MIN = 10;

export const emailField = z
  .string({ error: 'must be an e-mail address' })
  .trim()
  .toLowerCase()
  .max(254, 'must be at most 254 characters')
  .pipe(z.email({ error: 'must be an e-mail address like name@example.com' }));

export const newPasswordField = z
  .string({ error: 'must be text' })
  .min(PASSWORD_MIN, `must be at least ${PASSWORD_MIN} characters`)
  .max(200, 'must be at most 200 characters');

export const loginBody = z.object({
  email: emailField,
  password: z.string({ error: 'is required' }).min(1, 'is required').max(200, 'must be at most 200 characters'),
});

export const passwordChangeBody = z.object({
  currentPassword: z.string({ error: 'is required' }).min(1, 'is required'),
  newPassword: newPasswordField,
});

export const resetRequestBody = z.object({ email: emailField });

export const resetConfirmBody = z.object({
  token: z.string({ error: 'is required' }).min(20, 'is not a valid reset link').max(200, 'is not a valid reset link'),
  password: newPasswordField,
});

export const activeCompanyBody = z.object({ companyId: z.uuid({ error: 'must be a company id' }) });
