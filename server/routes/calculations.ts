import { z } from 'zod';
import { calculationIds, calculationMeta, calculationSchemas } from '../engine';
import { isCalculationId } from '../../shared/calculations/ids';
import type { AppContext } from '../context';
import { notFound } from '../middleware/errors';
import { deleteRun, getRun, listRuns, runCalculation } from '../services/calculation-runs';
import type { RouteDef } from './types';

/** Roles that hold a seat and use the calculators, plus platform staff. */
export const CALCULATOR_ROLES = ['crew', 'manager', 'admin', 'operator'] as const;

const runBody = z.object({
  inputs: z.unknown().refine((v) => v !== undefined, 'is required: send { "inputs": { ... } }'),
  save: z.boolean({ error: 'must be true or false' }).optional(),
  label: z.string({ error: 'must be text' }).trim().max(120, 'must be at most 120 characters').optional(),
});
const idParams = z.object({ id: z.string() });
const runParams = z.object({ runId: z.uuid({ error: 'must be a saved calculation id' }) });
const historyQuery = z.object({
  page: z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be at least 1').default(1),
  pageSize: z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be at least 1').max(100, 'must be at most 100').default(20),
  calculationId: z.enum(calculationIds, { error: 'must be one of the calculation ids' }).optional(),
});

let listingCache: unknown;
/** Ids with their input JSON Schema and output units; built once, the schemas never change at run time. */
export function calculationListing() {
  listingCache ??= {
    calculations: calculationIds.map((id) => ({
      id,
      title: calculationMeta[id].title,
      description: calculationMeta[id].description,
      inputSchema: z.toJSONSchema(calculationSchemas[id], { io: 'input', unrepresentable: 'any' }),
      inputs: calculationMeta[id].inputs,
      outputs: calculationMeta[id].outputs,
    })),
  };
  return listingCache;
}

export function calculationRoutes(ctx: AppContext): RouteDef[] {
  return [
    { method: 'get', path: '/api/calculations', access: 'signed-in', summary: 'Calculation ids with input schemas and output units', handler: () => calculationListing() },
    {
      method: 'post', path: '/api/calculations/:id', access: CALCULATOR_ROLES, summary: 'Run one calculation', params: idParams, body: runBody,
      handler: async (req) => {
        const id = req.valid.params.id;
        if (!isCalculationId(id)) throw notFound(`Calculation "${id}"`);
        const { inputs, save, label } = req.valid.body;
        return runCalculation(ctx.knex, { userId: req.user!.id, companyId: req.membership!.companyId, calculationId: id, inputs, save: save ?? false, label });
      },
    },
    {
      method: 'get', path: '/api/calculation-runs', access: CALCULATOR_ROLES, summary: 'My saved calculations, newest first', query: historyQuery,
      handler: (req) => listRuns(ctx.knex, req.user!.id, req.valid.query),
    },
    {
      method: 'get', path: '/api/calculation-runs/:runId', access: CALCULATOR_ROLES, summary: 'One of my saved calculations', params: runParams,
      handler: async (req) => ({ run: await getRun(ctx.knex, req.user!.id, req.valid.params.runId) }),
    },
    {
      method: 'delete', path: '/api/calculation-runs/:runId', access: CALCULATOR_ROLES, summary: 'Delete one of my saved calculations', params: runParams,
      handler: async (req, res) => {
        await deleteRun(ctx.knex, req.user!.id, req.valid.params.runId);
        res.status(204).end();
      },
    },
  ];
}
