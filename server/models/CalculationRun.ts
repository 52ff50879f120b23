import { BaseModel } from './BaseModel';

export class CalculationRun extends BaseModel {
  static tableName = 'calculation_runs';
  id!: string;
  userId!: string;
  companyId!: string | null;
  calculationId!: string;
  label!: string | null;
  inputs!: Record<string, unknown>;
  results!: Record<string, unknown>;
  warnings!: string[];
  createdAt!: Date;

  static get jsonAttributes() {
    return ['inputs', 'results', 'warnings'];
  }
}
