import fs from 'node:fs/promises';
import path from 'node:path';
import { z } from 'zod';
import type { AppContext } from '../context';
import { notFound } from '../middleware/errors';
import { AREA_IDS, ASSET_NAME, ASSETS_DIR, areaSettingsSchema, blueprintSettingsSchema } from '../services/content-sync';
import {
  completeLesson, listAreas, listAreasForOperator, listBlueprintsForOperator, listCourses, openLesson, updateArea, updateBlueprint,
} from '../services/learning';
import type { RouteDef } from './types';

/** Roles that read lessons: crew members, the managers and admins who oversee them, and platform staff. */
export const LEARNER_ROLES = ['crew', 'manager', 'admin', 'operator'] as const;

const lessonParams = z.object({ lessonId: z.uuid({ error: 'must be a lesson id' }) });
const areaParams = z.object({ areaId: z.enum(AREA_IDS, { error: `must be one of ${AREA_IDS.join(', ')}` }) });
const assetParams = z.object({ name: z.string().regex(ASSET_NAME, 'must be a diagram file name such as traverse-circular.svg') });

// Diagrams are shown through <img>, but one opened on its own must not run anything either.
const SVG_POLICY = "default-src 'none'; style-src 'unsafe-inline'";

export function learningRoutes(ctx: AppContext): RouteDef[] {
  return [
    {
      method: 'get', path: '/api/areas', access: 'signed-in', summary: 'The six competency areas with their certificate validity',
      handler: async () => ({ areas: await listAreas(ctx.knex) }),
    },
    {
      method: 'get', path: '/api/courses', access: LEARNER_ROLES, summary: 'Courses by area with my progress through the lessons',
      handler: (req) => listCourses(ctx.knex, req.user!.id),
    },
    {
      method: 'get', path: '/api/lessons/:lessonId', access: LEARNER_ROLES, summary: 'One lesson to read, with its neighbours and my progress',
      params: lessonParams,
      handler: (req) => openLesson(ctx.knex, req.user!.id, req.valid.params.lessonId),
    },
    {
      method: 'post', path: '/api/lessons/:lessonId/complete', access: LEARNER_ROLES, summary: 'Mark a lesson finished at its current version',
      params: lessonParams,
      handler: (req) => completeLesson(ctx.knex, req.user!.id, req.valid.params.lessonId),
    },
    {
      method: 'get', path: '/api/content/assets/:name', access: 'public', summary: 'A lesson diagram (SVG)',
      params: assetParams,
      handler: async (req, res) => {
        const name: string = req.valid.params.name;
        let svg: Buffer;
        try {
          // The name pattern allows no separators or dots beyond ".svg", so this stays inside the folder.
          svg = await fs.readFile(path.join(ASSETS_DIR, name));
        } catch {
          throw notFound(`Diagram "${name}"`);
        }
        res.setHeader('Content-Security-Policy', SVG_POLICY);
        res.setHeader('Cache-Control', 'public, max-age=3600');
        res.type('image/svg+xml').send(svg);
      },
    },
    {
      method: 'get', path: '/api/operator/areas', access: ['operator'], summary: 'Areas with their content file values, for editing',
      handler: async () => ({ areas: await listAreasForOperator(ctx.knex) }),
    },
    {
      method: 'put', path: '/api/operator/areas/:areaId', access: ['operator'], summary: "Change an area's name and certificate validity",
      params: areaParams, body: areaSettingsSchema,
      handler: async (req) => ({ area: await updateArea(ctx.knex, req.valid.params.areaId, req.valid.body, { userId: req.user!.id, ip: req.ip }) }),
    },
    {
      method: 'get', path: '/api/operator/blueprints', access: ['operator'], summary: 'Exam blueprints for every area, for editing',
      handler: async () => ({ blueprints: await listBlueprintsForOperator(ctx.knex) }),
    },
    {
      method: 'put', path: '/api/operator/blueprints/:areaId', access: ['operator'], summary: "Change an area's exam blueprint",
      params: areaParams, body: blueprintSettingsSchema,
      handler: async (req) => ({ blueprint: await updateBlueprint(ctx.knex, req.valid.params.areaId, req.valid.body, { userId: req.user!.id, ip: req.ip }) }),
    },
  ];
}
