import type { Knex } from 'knex';
import { badRequest, notFound } from '../middleware/errors';
import { recordAudit } from './audit';
import { drillTemplates, getDrillTemplate } from '../engine/drills';
import { canonicalJson, drillAreaProblem, type AreaId } from './content-sync';

export interface AreaSummary {
  id: string;
  name: string;
  summary: string;
  methods: string[];
  validityMonths: number;
}

export interface DrillLink {
  id: string;
  title: string;
}

export interface LessonProgressView {
  status: 'not-started' | 'opened' | 'completed';
  openedAt: Date | null;
  completedAt: Date | null;
  /** The lesson changed after this learner finished it. */
  revisedSinceCompleted: boolean;
}

interface AreaRow {
  id: AreaId;
  name: string;
  summary: string;
  methods: string[];
  validity_months: number;
  sort_order: number;
  /** The areas.json values as last synced. */
  source: { name?: string; validityMonths?: number };
  updated_at: Date;
}

interface LessonRow {
  id: string;
  area_id: AreaId;
  slug: string;
  title: string;
  sort_order: number;
  minutes: number;
  methods: string[];
  drills: string[];
  body_html: string;
  version: number;
  updated_at: Date;
}

interface ProgressRow {
  user_id: string;
  lesson_id: string;
  first_opened_at: Date | null;
  completed_at: Date | null;
  completed_version: number | null;
}

export interface MixEntry {
  drill: string;
  count: number;
}

export interface BlueprintSettings {
  title: string;
  timeLimitMinutes: number;
  passMarkPct: number;
  questionCount: number;
  mix: MixEntry[];
}

interface BlueprintRow {
  area_id: AreaId;
  title: string;
  time_limit_minutes: number;
  pass_mark_pct: number;
  question_count: number;
  mix: MixEntry[];
  /** The blueprint file's values as last synced. */
  source: Partial<BlueprintSettings> | null;
  edited_by_operator: boolean;
  updated_at: Date;
}

// The sync only loads drill ids the registry knows, so a missing title means the registry changed since.
const drillLinks = (ids: readonly string[] | null): DrillLink[] => (ids ?? []).map((id) => ({ id, title: getDrillTemplate(id)?.title ?? id }));
const drillsOfArea = (areaId: string) => drillLinks(drillTemplates.filter((t) => t.area === areaId).map((t) => t.id));

function progressView(row: ProgressRow | undefined, lessonVersion: number): LessonProgressView {
  const completedAt = row?.completed_at ?? null;
  return {
    status: completedAt ? 'completed' : row?.first_opened_at ? 'opened' : 'not-started',
    openedAt: row?.first_opened_at ?? null,
    completedAt,
    revisedSinceCompleted: Boolean(completedAt && row?.completed_version != null && row.completed_version < lessonVersion),
  };
}

const areaSummary = (row: AreaRow): AreaSummary => ({
  id: row.id,
  name: row.name,
  summary: row.summary,
  methods: row.methods,
  validityMonths: row.validity_months,
});

export async function listAreas(knex: Knex): Promise<AreaSummary[]> {
  return (await knex<AreaRow>('areas').orderBy('sort_order').select('*')).map(areaSummary);
}

/** Every area with its published lessons and this learner's progress through them. */
export async function listCourses(knex: Knex, userId: string) {
  const [areas, lessons, progress] = await Promise.all([
    knex<AreaRow>('areas').orderBy('sort_order').select('*'),
    knex<LessonRow>('lessons').whereNull('retired_at').orderBy([{ column: 'area_id' }, { column: 'sort_order' }]).select('*'),
    knex('lesson_progress').join('lessons', 'lessons.id', 'lesson_progress.lesson_id').whereNull('lessons.retired_at')
      .where('lesson_progress.user_id', userId).select<ProgressRow[]>('lesson_progress.*'),
  ]);
  const progressByLesson = new Map(progress.map((row) => [row.lesson_id, row]));
  return {
    areas: areas.map((area) => {
      const own = lessons
        .filter((l) => l.area_id === area.id)
        .map((l) => ({
          id: l.id,
          slug: l.slug,
          title: l.title,
          order: l.sort_order,
          minutes: l.minutes,
          methods: l.methods,
          drills: drillLinks(l.drills),
          progress: progressView(progressByLesson.get(l.id), l.version),
        }));
      const completed = own.filter((l) => l.progress.status === 'completed').length;
      return {
        ...areaSummary(area),
        lessonCount: own.length,
        completedCount: completed,
        openedCount: own.filter((l) => l.progress.status !== 'not-started').length,
        percent: own.length ? Math.round((100 * completed) / own.length) : 0,
        minutes: own.reduce((sum, l) => sum + l.minutes, 0),
        lessons: own,
      };
    }),
  };
}

async function findLesson(db: Knex | Knex.Transaction, lessonId: string) {
  const lesson: (LessonRow & { area_name: string }) | undefined = await db('lessons').join('areas', 'areas.id', 'lessons.area_id')
    .where('lessons.id', lessonId).whereNull('lessons.retired_at').first('lessons.*', 'areas.name as area_name');
  if (!lesson) throw notFound('Lesson');
  return lesson;
}

async function upsertProgress(db: Knex | Knex.Transaction, userId: string, lessonId: string, changes: { completed_at?: Knex.Raw; completed_version?: number }) {
  const [row] = await db('lesson_progress')
    .insert({ user_id: userId, lesson_id: lessonId, first_opened_at: db.fn.now(), ...changes })
    .onConflict(['user_id', 'lesson_id'])
    .merge({
      // Opening again never moves the first-opened time; completing again moves the completion.
      first_opened_at: db.raw('coalesce(lesson_progress.first_opened_at, excluded.first_opened_at)'),
      ...(changes.completed_at ? { completed_at: db.raw('excluded.completed_at'), completed_version: db.raw('excluded.completed_version') } : {}),
    })
    .returning('*');
  return row as ProgressRow;
}

/** The lesson to read, its neighbours in the area, and this learner's progress; records the first opening. */
export async function openLesson(knex: Knex, userId: string, lessonId: string) {
  const lesson = await findLesson(knex, lessonId);
  const [siblings, progress] = await Promise.all([
    knex<LessonRow>('lessons').where({ area_id: lesson.area_id }).whereNull('retired_at').orderBy('sort_order').select('id', 'title'),
    upsertProgress(knex, userId, lesson.id, {}),
  ]);
  const index = siblings.findIndex((s) => s.id === lesson.id);
  const neighbour = (i: number) => (siblings[i] ? { id: siblings[i].id, title: siblings[i].title } : null);
  return {
    lesson: {
      id: lesson.id,
      areaId: lesson.area_id,
      areaName: lesson.area_name,
      slug: lesson.slug,
      title: lesson.title,
      order: lesson.sort_order,
      minutes: lesson.minutes,
      methods: lesson.methods,
      drills: drillLinks(lesson.drills),
      version: lesson.version,
      updatedAt: lesson.updated_at,
      bodyHtml: lesson.body_html,
    },
    position: { index: index + 1, total: siblings.length },
    prev: neighbour(index - 1),
    next: neighbour(index + 1),
    progress: progressView(progress, lesson.version),
  };
}

/** Marks the lesson finished at its current version (finishing a revised lesson again records the new one). */
export async function completeLesson(knex: Knex, userId: string, lessonId: string) {
  const lesson = await findLesson(knex, lessonId);
  const existing = await knex<ProgressRow>('lesson_progress').where({ user_id: userId, lesson_id: lesson.id }).first();
  if (existing?.completed_at && existing.completed_version === lesson.version) {
    return { progress: progressView(existing, lesson.version), version: lesson.version };
  }
  const row = await upsertProgress(knex, userId, lesson.id, { completed_at: knex.fn.now(), completed_version: lesson.version });
  return { progress: progressView(row, lesson.version), version: lesson.version };
}

// Operator: areas

function operatorArea(row: AreaRow, lessonCount: number) {
  const source = row.source ?? {};
  return {
    ...areaSummary(row),
    order: row.sort_order,
    lessonCount,
    drills: drillsOfArea(row.id),
    fileValues: { name: source.name ?? null, validityMonths: source.validityMonths ?? null },
    editedByOperator: source.name !== row.name || source.validityMonths !== row.validity_months,
    updatedAt: row.updated_at,
  };
}

async function lessonCounts(db: Knex | Knex.Transaction) {
  const rows = await db('lessons').whereNull('retired_at').groupBy('area_id').select('area_id').count<{ area_id: string; count: number }[]>('* as count');
  return new Map(rows.map((r) => [r.area_id, Number(r.count)]));
}

export async function listAreasForOperator(knex: Knex) {
  const [areas, counts] = await Promise.all([knex<AreaRow>('areas').orderBy('sort_order').select('*'), lessonCounts(knex)]);
  return areas.map((row) => operatorArea(row, counts.get(row.id) ?? 0));
}

export interface Actor {
  userId: string;
  ip?: string;
}

export async function updateArea(knex: Knex, areaId: AreaId, changes: { name: string; validityMonths: number }, actor: Actor) {
  return knex.transaction(async (trx) => {
    const before = await trx<AreaRow>('areas').where({ id: areaId }).forUpdate().first();
    if (!before) throw notFound('Area');
    const [after] = await trx<AreaRow>('areas')
      .where({ id: areaId })
      .update({ name: changes.name, validity_months: changes.validityMonths, updated_at: trx.fn.now() })
      .returning('*');
    await recordAudit(trx, {
      actorUserId: actor.userId,
      action: 'area.updated',
      targetType: 'area',
      targetId: areaId,
      details: { before: { name: before.name, validityMonths: before.validity_months }, after: changes },
      ip: actor.ip,
    });
    return operatorArea(after, (await lessonCounts(trx)).get(areaId) ?? 0);
  });
}

// Operator: blueprints

// jsonb returns keys in its own order; rebuilding each entry keeps responses and comparisons stable.
const mixOf = (mix: readonly MixEntry[]) => mix.map((m) => ({ drill: m.drill, count: m.count }));

const settingsOf = (row: BlueprintRow): BlueprintSettings => ({
  title: row.title,
  timeLimitMinutes: row.time_limit_minutes,
  passMarkPct: row.pass_mark_pct,
  questionCount: row.question_count,
  mix: mixOf(row.mix),
});

/** The blueprint file's values as last synced (kept in `source`). */
function fileSettings(source: Partial<BlueprintSettings> | null): BlueprintSettings | null {
  if (!source?.mix) return null;
  return {
    title: source.title ?? '',
    timeLimitMinutes: source.timeLimitMinutes ?? 0,
    passMarkPct: source.passMarkPct ?? 0,
    questionCount: source.questionCount ?? 0,
    mix: mixOf(source.mix),
  };
}

function operatorBlueprint(row: BlueprintRow & { area_name: string }) {
  return {
    areaId: row.area_id,
    areaName: row.area_name,
    ...settingsOf(row),
    availableDrills: drillsOfArea(row.area_id),
    fileValues: fileSettings(row.source),
    editedByOperator: row.edited_by_operator,
    updatedAt: row.updated_at,
  };
}

const blueprintQuery = (db: Knex | Knex.Transaction) =>
  db('exam_blueprints').join('areas', 'areas.id', 'exam_blueprints.area_id')
    .select<(BlueprintRow & { area_name: string })[]>('exam_blueprints.*', 'areas.name as area_name', 'areas.sort_order');

export async function listBlueprintsForOperator(knex: Knex) {
  return (await blueprintQuery(knex).orderBy('areas.sort_order')).map(operatorBlueprint);
}

export async function updateBlueprint(knex: Knex, areaId: AreaId, settings: BlueprintSettings, actor: Actor) {
  return knex.transaction(async (trx) => {
    const before = await trx<BlueprintRow>('exam_blueprints').where({ area_id: areaId }).forUpdate().first();
    if (!before) throw notFound('Exam blueprint');
    const choices = drillsOfArea(areaId).map((d) => d.id).join(', ');
    const fields = settings.mix.flatMap((entry, i) => {
      const problem = drillAreaProblem(entry.drill, areaId);
      return problem ? [{ field: `mix.${i}.drill`, message: `mix.${i}.drill: ${problem}; choose one of ${choices}` }] : [];
    });
    if (fields.length) throw badRequest(`The blueprint names ${fields.length === 1 ? 'a drill' : 'drills'} from outside the ${areaId} area.`, fields);
    const mix = mixOf(settings.mix);
    const editedByOperator = canonicalJson({ ...settings, mix }) !== canonicalJson(fileSettings(before.source));
    await trx('exam_blueprints').where({ area_id: areaId }).update({
      title: settings.title,
      time_limit_minutes: settings.timeLimitMinutes,
      pass_mark_pct: settings.passMarkPct,
      question_count: settings.questionCount,
      mix: JSON.stringify(mix),
      edited_by_operator: editedByOperator,
      updated_by: actor.userId,
      updated_at: trx.fn.now(),
    });
    await recordAudit(trx, {
      actorUserId: actor.userId,
      action: 'blueprint.updated',
      targetType: 'exam_blueprint',
      targetId: areaId,
      details: { before: settingsOf(before), after: { ...settings, mix } },
      ip: actor.ip,
    });
    const [after] = await blueprintQuery(trx).where('exam_blueprints.area_id', areaId);
    return operatorBlueprint(after);
  });
}
