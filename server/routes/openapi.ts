import { z } from 'zod';
import { calculationIds, calculationMeta, calculationSchemas } from '../engine';
import type { RouteDef } from './types';

const errorSchema = {
  type: 'object',
  properties: {
    error: {
      type: 'object',
      required: ['code', 'message'],
      properties: {
        code: { type: 'string' },
        message: { type: 'string' },
        fields: { type: 'array', items: { type: 'object', properties: { field: { type: 'string' }, message: { type: 'string' } } } },
      },
    },
  },
};

const stepSchema = {
  type: 'object',
  properties: {
    key: { type: 'string' }, label: { type: 'string' }, equation: { type: 'string', description: 'LaTeX' },
    value: { oneOf: [{ type: 'number' }, { type: 'boolean' }] }, unit: { type: 'string' }, source: { type: 'string' },
    dependsOn: { type: 'array', items: { type: 'string' } },
  },
};

let cached: object | undefined;

/** The OpenAPI document for the calculation routes, generated from the same zod schemas the engine uses. */
export function openApiDocument(routes: RouteDef[]) {
  if (cached) return cached;
  const paths: Record<string, unknown> = {};
  for (const id of calculationIds) {
    const meta = calculationMeta[id];
    paths[`/api/calculations/${id}`] = {
      post: {
        summary: meta.title,
        description: meta.description,
        tags: ['calculations'],
        security: [{ session: [] }],
        requestBody: {
          required: true,
          content: { 'application/json': { schema: { type: 'object', required: ['inputs'], properties: {
            inputs: z.toJSONSchema(calculationSchemas[id], { io: 'input', unrepresentable: 'any', target: 'openapi-3.0' }),
            save: { type: 'boolean', description: 'Keep this run in my history' },
            label: { type: 'string', maxLength: 120 },
          } } } },
        },
        responses: {
          200: { description: 'The result with worked steps', content: { 'application/json': { schema: { type: 'object', properties: {
            id: { type: 'string', enum: [id] },
            results: { type: 'object', properties: Object.fromEntries(Object.entries(meta.outputs).map(([k, o]) => [k, { description: `${o.label}${o.unit ? ` (${o.unit})` : ''}` }])) },
            steps: { type: 'array', items: stepSchema },
            warnings: { type: 'array', items: { type: 'string' } },
          } } } } },
          400: { description: 'Bad input: every bad field is listed', content: { 'application/json': { schema: errorSchema } } },
          401: { description: 'Not signed in', content: { 'application/json': { schema: errorSchema } } },
          403: { description: 'Role without calculator access, or missing CSRF token', content: { 'application/json': { schema: errorSchema } } },
        },
      },
    };
  }
  const listing = routes.find((r) => r.path === '/api/calculations' && r.method === 'get');
  paths['/api/calculations'] = { get: { summary: listing?.summary, tags: ['calculations'], security: [{ session: [] }], responses: { 200: { description: 'Ids, input JSON Schemas, output units' } } } };
  cached = {
    openapi: '3.0.3',
    info: { title: 'Plumewright calculation API', version: '1.0.0', description: 'Stack-test reduction calculations following the EPA reference methods. Results record training and field arithmetic; they do not replace the method text, agency requirements, accreditation or licensed professional judgement.' },
    components: {
      securitySchemes: {
        session: { type: 'apiKey', in: 'cookie', name: 'pw.sid', description: 'Sign in with POST /api/auth/login; send the x-csrf-token header from GET /api/auth/csrf on every POST.' },
      },
    },
    paths,
  };
  return cached;
}

export function openApiRoutes(getRoutes: () => RouteDef[]): RouteDef[] {
  return [{ method: 'get', path: '/api/openapi.json', access: 'public', summary: 'OpenAPI document of the calculation routes', handler: () => openApiDocument(getRoutes()) }];
}
