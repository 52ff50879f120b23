import type { RelationMappings } from 'objection';
import { BaseModel } from './BaseModel';
import { Membership } from './Membership';

export type CompanyKind = 'customer' | 'platform' | 'auditing';

export class Company extends BaseModel {
  static tableName = 'companies';
  id!: string;
  name!: string;
  kind!: CompanyKind;
  createdAt!: Date;
  updatedAt!: Date;
  memberships?: Membership[];

  static get relationMappings(): RelationMappings {
    return {
      memberships: { relation: BaseModel.HasManyRelation, modelClass: Membership, join: { from: 'companies.id', to: 'memberships.companyId' } },
    };
  }
}
