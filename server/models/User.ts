import type { RelationMappings } from 'objection';
import { BaseModel } from './BaseModel';
import { Membership } from './Membership';

export class User extends BaseModel {
  static tableName = 'users';
  id!: string;
  email!: string;
  name!: string;
  passwordHash!: string | null;
  passwordChangedAt!: Date | null;
  disabledAt!: Date | null;
  createdAt!: Date;
  updatedAt!: Date;
  memberships?: Membership[];

  static get relationMappings(): RelationMappings {
    return {
      memberships: { relation: BaseModel.HasManyRelation, modelClass: Membership, join: { from: 'users.id', to: 'memberships.userId' } },
    };
  }

  /** The only fields of a user that ever leave the server. */
  toPublic() {
    return { id: this.id, email: this.email, name: this.name };
  }
}
