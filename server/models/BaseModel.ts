import { Model, snakeCaseMappers } from 'objection';

/** Columns are snake_case in PostgreSQL and camelCase in code. */
export class BaseModel extends Model {
  static get columnNameMappers() {
    return snakeCaseMappers();
  }
}
