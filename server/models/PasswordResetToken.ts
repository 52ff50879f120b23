import { BaseModel } from './BaseModel';

export class PasswordResetToken extends BaseModel {
  static tableName = 'password_reset_tokens';
  id!: string;
  userId!: string;
  tokenHash!: string;
  expiresAt!: Date;
  usedAt!: Date | null;
  createdAt!: Date;
}
