import { BaseModel } from './BaseModel';

export class AuditEntry extends BaseModel {
  static tableName = 'audit_log';
  id!: number;
  at!: Date;
  actorUserId!: string | null;
  companyId!: string | null;
  action!: string;
  targetType!: string | null;
  targetId!: string | null;
  details!: Record<string, unknown>;
  ip!: string | null;

  static get jsonAttributes() {
    return ['details'];
  }
}
