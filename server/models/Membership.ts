import type { RelationMappings } from 'objection';
import type { Role } from '../../shared/roles';
import { BaseModel } from './BaseModel';
import { Company } from './Company';
import { User } from './User';

export class Membership extends BaseModel {
  static tableName = 'memberships';
  id!: string;
  userId!: string;
  companyId!: string;
  roles!: Role[];
  createdAt!: Date;
  updatedAt!: Date;
  company?: Company;
  user?: User;

  static get relationMappings(): RelationMappings {
    return {
      company: { relation: BaseModel.BelongsToOneRelation, modelClass: Company, join: { from: 'memberships.companyId', to: 'companies.id' } },
      user: { relation: BaseModel.BelongsToOneRelation, modelClass: User, join: { from: 'memberships.userId', to: 'users.id' } },
    };
  }
}
