import type { Knex } from 'knex';
import { calculate } from '../engine';
import type { CalculationId } from '../engine/types';
import { notFound } from '../middleware/errors';

export interface RunRequest {
  userId: string;
  companyId: string | null;
  calculationId: CalculationId;
  inputs: unknown;
  save: boolean;
  label?: string;
}

/** Runs a calculation (the engine validates) and, when asked, keeps it in the user's history. */
export async function runCalculation(knex: Knex, request: RunRequest) {
  const result = calculate(request.calculationId, request.inputs);
  if (!request.save) return result;
  const [row] = await knex('calculation_runs')
    .insert({
      user_id: request.userId,
      company_id: request.companyId,
      calculation_id: request.calculationId,
      label: request.label ?? null,
      inputs: JSON.stringify(request.inputs),
      results: JSON.stringify(result.results),
      warnings: JSON.stringify(result.warnings),
    })
    .returning(['id', 'created_at']);
  return { ...result, run: { id: row.id as string, createdAt: row.created_at as Date } };
}

export async function listRuns(knex: Knex, userId: string, opts: { page: number; pageSize: number; calculationId?: string }) {
  const base = knex('calculation_runs').where({ user_id: userId });
  if (opts.calculationId) base.andWhere({ calculation_id: opts.calculationId });
  const [{ count }] = await base.clone().count<{ count: number }[]>('* as count');
  const rows = await base
    .clone()
    .orderBy('created_at', 'desc')
    .offset((opts.page - 1) * opts.pageSize)
    .limit(opts.pageSize)
    .select('id', 'calculation_id', 'label', 'inputs', 'results', 'warnings', 'created_at');
  return {
    total: Number(count),
    runs: rows.map((r) => ({ id: r.id, calculationId: r.calculation_id, label: r.label, inputs: r.inputs, results: r.results, warnings: r.warnings, createdAt: r.created_at })),
  };
}

export async function getRun(knex: Knex, userId: string, runId: string) {
  const r = await knex('calculation_runs').where({ id: runId, user_id: userId }).first();
  if (!r) throw notFound('Saved calculation');
  return { id: r.id, calculationId: r.calculation_id, label: r.label, inputs: r.inputs, results: r.results, warnings: r.warnings, createdAt: r.created_at };
}

export async function deleteRun(knex: Knex, userId: string, runId: string) {
  const n = await knex('calculation_runs').where({ id: runId, user_id: userId }).del();
  if (!n) throw notFound('Saved calculation');
}
