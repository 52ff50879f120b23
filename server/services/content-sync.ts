import crypto from 'node:crypto';
import fs from 'node:fs/promises';
import path from 'node:path';
import type { Knex } from 'knex';
import matter from 'gray-matter';
import katex, { type KatexOptions } from 'katex';
import MarkdownIt from 'markdown-it';
import markdownItKatex from '@vscode/markdown-it-katex';
import { z, type core } from 'zod';
import { getDrillTemplate } from '../engine/drills';

/** The course content shipped with the app (content/README.md describes its layout). */
export const CONTENT_DIR = path.resolve(import.meta.dirname, '../../content');
export const ASSETS_DIR = path.join(CONTENT_DIR, 'assets');

/** Fixed area ids: lessons, drills, blueprints and certificates refer to them. */
export const AREA_IDS = ['flow-moisture', 'particulate', 'gas-analysis', 'emission-rates', 'monitor-audits', 'ambient-conversions'] as const;
export type AreaId = (typeof AREA_IDS)[number];
export const isAreaId = (value: string): value is AreaId => (AREA_IDS as readonly string[]).includes(value);

/** A diagram name the asset route will serve: lower-case words and an `.svg` ending, nothing else. */
export const ASSET_NAME = /^[a-z0-9]+(?:-[a-z0-9]+)*\.svg$/;
const KEBAB_ID = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;
const LESSON_FILE = /^(?:(\d+)-)?([a-z0-9]+(?:-[a-z0-9]+)*)\.md$/;

/** The message zod shows when a value is missing or of the wrong type. */
const expecting = (what: string) => (issue: { input?: unknown }) => (issue.input === undefined ? 'is required' : what);
const wholeNumber = (min: number, max: number) => {
  const message = `must be a whole number from ${min} to ${max}`;
  return z.number({ error: expecting(message) }).int(message).min(min, message).max(max, message);
};
const text = (max: number) =>
  z.string({ error: expecting('must be text') }).trim().min(1, 'must not be empty').max(max, `must be at most ${max} characters`);
const textList = (what: string) =>
  z.array(text(120), { error: expecting(`must be a list of ${what}`) }).min(1, `must name at least one of the ${what}`);
const drillId = z.string({ error: expecting('must be a drill id') }).regex(KEBAB_ID, 'must be a drill id in lower-case words joined by hyphens');

/** Limits shared by the blueprint files and the operator's edits. */
const BLUEPRINT_LIMITS = { timeLimitMinutes: [5, 480], passMarkPct: [1, 100], questionCount: [1, 40] } as const;

const mixEntry = z.strictObject({ drill: drillId, count: wholeNumber(1, 40) }, { error: 'must be an object like { "drill": "...", "count": 2 }' });

/** A blueprint's editable settings; the refinement keeps the mix and the question count in step. */
const blueprintSettingsShape = {
  title: text(160),
  timeLimitMinutes: wholeNumber(...BLUEPRINT_LIMITS.timeLimitMinutes),
  passMarkPct: wholeNumber(...BLUEPRINT_LIMITS.passMarkPct),
  questionCount: wholeNumber(...BLUEPRINT_LIMITS.questionCount),
  mix: z.array(mixEntry, { error: expecting('must be a list of { drill, count } entries') }).min(1, 'must list at least one drill'),
};

function checkMix(value: { questionCount: number; mix: { drill: string; count: number }[] }, ctx: z.RefinementCtx) {
  const seen = new Set<string>();
  value.mix.forEach((entry, i) => {
    if (seen.has(entry.drill)) ctx.addIssue({ code: 'custom', path: ['mix', i, 'drill'], message: `lists "${entry.drill}" twice; give each drill one entry with its total count` });
    seen.add(entry.drill);
  });
  const sum = value.mix.reduce((total, entry) => total + entry.count, 0);
  if (sum !== value.questionCount) {
    ctx.addIssue({ code: 'custom', path: ['mix'], message: `the counts add up to ${sum}, but questionCount is ${value.questionCount}; they must be equal` });
  }
}

/** What an operator may change on an area; the same rules as areas.json. */
export const areaSettingsSchema = z.object({ name: text(80), validityMonths: wholeNumber(1, 120) });
export const blueprintSettingsSchema = z.object(blueprintSettingsShape).superRefine(checkMix);

const areaFileSchema = z.strictObject({
  id: z.enum(AREA_IDS, { error: `must be one of ${AREA_IDS.join(', ')}` }),
  name: text(80),
  summary: text(600),
  methods: textList('methods'),
  validityMonths: wholeNumber(1, 120),
  order: wholeNumber(1, 99),
});
const areasFileSchema = z.array(areaFileSchema, { error: 'must be a JSON array of areas' });

const frontMatterSchema = z.strictObject({
  title: text(160),
  area: z.string({ error: expecting('must be the area id') }),
  order: wholeNumber(1, 99),
  minutes: wholeNumber(1, 240),
  methods: textList('methods'),
  drills: z.array(drillId, { error: expecting('must be a list of drill ids (may be empty)') }),
});

const blueprintFileSchema = z.strictObject({ area: z.string({ error: expecting('must be the area id') }), ...blueprintSettingsShape }).superRefine(checkMix);

type AreaFile = z.infer<typeof areaFileSchema>;
type FrontMatter = z.infer<typeof frontMatterSchema>;
type BlueprintFile = z.infer<typeof blueprintFileSchema>;

export interface ContentProblem {
  /** Path relative to the content folder, e.g. `lessons/particulate/02-isokinetic-sampling.md`. */
  file: string;
  field: string;
  message: string;
}

/** Malformed content: the sync loads nothing and the app refuses to start until it is fixed. */
/** A problem message when `id` is not a drill template of this area (the registry in server/engine/drills). */
export function drillAreaProblem(id: string, areaId: AreaId): string | null {
  const template = getDrillTemplate(id);
  if (!template) return `"${id}" is not a known drill id`;
  if (template.area !== areaId) return `"${id}" is a drill of the ${template.area} area, not ${areaId}`;
  return null;
}

export class ContentError extends Error {
  constructor(public readonly problems: ContentProblem[]) {
    super(
      `Course content has ${problems.length} problem${problems.length === 1 ? '' : 's'}; nothing was loaded:\n` +
        problems.map((p) => `  ${p.file}: ${p.field}: ${p.message}`).join('\n'),
    );
    this.name = 'ContentError';
  }
}

function zodProblems(file: string, prefix: string, issues: core.$ZodIssue[]): ContentProblem[] {
  return issues.map((issue) => {
    const where = issue.path.map(String).join('.');
    if (issue.code === 'unrecognized_keys') {
      const field = [prefix, where, issue.keys.join(', ')].filter(Boolean).join(' ');
      return { file, field, message: 'is not a known field (check the spelling against content/README.md)' };
    }
    return { file, field: [prefix, where].filter(Boolean).join(' ') || '(file)', message: issue.message };
  });
}

interface AssetSize {
  width: number;
  height: number;
}

/** The drawing size from the root element's viewBox (content/README.md asks every SVG for one). */
function svgSize(svg: string): AssetSize | null {
  const viewBox = /<svg\b[^>]*\bviewBox="\s*[-\d.]+[\s,]+[-\d.]+[\s,]+([\d.]+)[\s,]+([\d.]+)\s*"/.exec(svg);
  if (!viewBox) return null;
  const [width, height] = [Math.round(Number(viewBox[1])), Math.round(Number(viewBox[2]))];
  return width > 0 && height > 0 ? { width, height } : null;
}

// The package is CommonJS with `exports.default`; some loaders hand ESM callers the whole exports object.
const katexPlugin = (markdownItKatex as unknown as { default?: typeof markdownItKatex }).default ?? markdownItKatex;

/** Markdown to HTML with KaTeX; maths errors are collected so the sync can refuse the file. */
function createRenderer() {
  const mathErrors: string[] = [];
  const recordingKatex = {
    ...katex,
    renderToString(latex: string, options?: KatexOptions) {
      try {
        return katex.renderToString(latex, {
          ...options,
          throwOnError: true,
          strict: (code: string, message: string) => {
            mathErrors.push(`$${latex}$: ${message} (${code})`);
            return 'ignore';
          },
        });
      } catch (error) {
        mathErrors.push(`$${latex}$: ${(error as Error).message}`);
        throw error;
      }
    },
  } as typeof katex;
  // Raw HTML stays escaped: lessons are Markdown only.
  const md = new MarkdownIt({ html: false, linkify: false, typographer: false });
  md.use(katexPlugin, { katex: recordingKatex, throwOnError: false });

  function render(body: string, assets: ReadonlyMap<string, AssetSize | null>) {
    mathErrors.length = 0;
    const problems: { field: string; message: string }[] = [];
    const tokens = md.parse(body, {});
    // The page prints the front matter title as its heading, so a leading `# Title` is dropped here.
    if (tokens[0]?.type === 'heading_open' && tokens[0].tag === 'h1') tokens.splice(0, 3);
    for (const token of tokens) {
      for (const child of token.children ?? []) {
        if (child.type !== 'image') continue;
        const src = String(child.attrGet('src') ?? '');
        const match = /^(?:\.\/)?assets\/(.+)$/.exec(src);
        if (!match || !ASSET_NAME.test(match[1])) {
          problems.push({ field: 'body image', message: `"${src}" must point into assets/ as assets/<name>.svg (no external references)` });
        } else if (!assets.has(match[1])) {
          problems.push({ field: 'body image', message: `"${src}" does not exist in content/assets` });
        } else {
          child.attrSet('src', `/api/content/assets/${match[1]}`);
          // The drawing's own size lets the page reserve its space before the lazy image arrives.
          const size = assets.get(match[1]);
          if (size) {
            child.attrSet('width', String(size.width));
            child.attrSet('height', String(size.height));
          }
          child.attrSet('loading', 'lazy');
        }
        if (!child.content.trim()) problems.push({ field: 'body image', message: `"${src}" needs alt text describing the diagram` });
      }
    }
    const html = md.renderer.render(tokens, md.options, {});
    for (const error of mathErrors) problems.push({ field: 'body maths', message: error });
    return { html, problems };
  }
  return { render };
}

/** JSON with object keys sorted: jsonb hands keys back in its own order, so plain JSON.stringify would differ. */
export const canonicalJson = (value: unknown) =>
  JSON.stringify(value, (_key, v) => (v && typeof v === 'object' && !Array.isArray(v) ? Object.fromEntries(Object.entries(v).sort(([a], [b]) => a.localeCompare(b))) : v));
const sha256 = (value: string) => crypto.createHash('sha256').update(value).digest('hex');
const normalise = (raw: string) => raw.replace(/\r\n?/g, '\n');
const refuseCode = () => {
  throw new Error('front matter must be YAML');
};
// gray-matter would evaluate `---js` front matter; content is data, never code.
const matterOptions = { engines: { js: refuseCode, javascript: refuseCode, coffee: refuseCode, coffeescript: refuseCode, cson: refuseCode } };

interface LessonInput {
  file: string;
  fileName: string;
  areaId: AreaId;
  slug: string;
  frontMatter: FrontMatter;
  bodyMd: string;
  bodyHtml: string;
  contentHash: string;
}

interface BlueprintInput extends BlueprintFile {
  area: AreaId;
  sourceHash: string;
}

export interface ParsedContent {
  areas: AreaFile[];
  lessons: LessonInput[];
  blueprints: BlueprintInput[];
}

async function readJson(contentDir: string, file: string, problems: ContentProblem[]): Promise<unknown> {
  let raw: string;
  try {
    raw = await fs.readFile(path.join(contentDir, file), 'utf8');
  } catch {
    problems.push({ file, field: '(file)', message: 'is missing or cannot be read' });
    return undefined;
  }
  try {
    return JSON.parse(raw);
  } catch (error) {
    problems.push({ file, field: '(file)', message: `is not valid JSON: ${(error as Error).message}` });
    return undefined;
  }
}

async function listDir(dir: string): Promise<string[]> {
  try {
    return (await fs.readdir(dir)).filter((name) => !name.startsWith('.')).sort();
  } catch {
    return [];
  }
}

/** Reads and checks every content file; throws ContentError listing each problem by file and field. */
export async function readContent(contentDir = CONTENT_DIR): Promise<ParsedContent> {
  const problems: ContentProblem[] = [];
  const assets = new Map<string, AssetSize | null>();
  for (const name of (await listDir(path.join(contentDir, 'assets'))).filter((n) => ASSET_NAME.test(n))) {
    assets.set(name, svgSize(await fs.readFile(path.join(contentDir, 'assets', name), 'utf8')));
  }

  // Areas
  const areas: AreaFile[] = [];
  const areasRaw = await readJson(contentDir, 'areas.json', problems);
  if (areasRaw !== undefined) {
    const parsed = areasFileSchema.safeParse(areasRaw);
    if (!parsed.success) problems.push(...zodProblems('areas.json', '', parsed.error.issues));
    else {
      areas.push(...parsed.data);
      for (const id of AREA_IDS) {
        const count = areas.filter((a) => a.id === id).length;
        if (count !== 1) problems.push({ file: 'areas.json', field: 'id', message: `area "${id}" must appear exactly once (found ${count})` });
      }
      const orders = areas.map((a) => a.order);
      if (new Set(orders).size !== orders.length) problems.push({ file: 'areas.json', field: 'order', message: 'each area needs its own order number' });
    }
  }

  // Lessons
  const renderer = createRenderer();
  const lessons: LessonInput[] = [];
  for (const dirName of await listDir(path.join(contentDir, 'lessons'))) {
    const dirFile = `lessons/${dirName}`;
    if (!isAreaId(dirName)) {
      problems.push({ file: dirFile, field: '(folder)', message: `is not an area id; lesson folders must be one of ${AREA_IDS.join(', ')}` });
      continue;
    }
    const seenOrders = new Map<number, string>();
    for (const fileName of (await listDir(path.join(contentDir, 'lessons', dirName))).filter((name) => name.endsWith('.md'))) {
      const file = `${dirFile}/${fileName}`;
      const nameMatch = LESSON_FILE.exec(fileName);
      if (!nameMatch) {
        problems.push({ file, field: '(file name)', message: 'must look like NN-lower-case-words.md' });
        continue;
      }
      const raw = normalise(await fs.readFile(path.join(contentDir, 'lessons', dirName, fileName), 'utf8'));
      let parsedFile: matter.GrayMatterFile<string>;
      try {
        parsedFile = matter(raw, matterOptions);
      } catch (error) {
        problems.push({ file, field: 'front matter', message: `cannot be read: ${(error as Error).message.split('\n')[0]}` });
        continue;
      }
      if (!Object.keys(parsedFile.data).length) {
        problems.push({ file, field: 'front matter', message: 'is missing; start the file with --- and the fields listed in content/README.md' });
        continue;
      }
      const front = frontMatterSchema.safeParse(parsedFile.data);
      if (!front.success) {
        problems.push(...zodProblems(file, 'front matter', front.error.issues));
        continue;
      }
      if (front.data.area !== dirName) {
        problems.push({ file, field: 'front matter area', message: `is "${front.data.area}" but the file sits in the ${dirName} folder; they must match` });
        continue;
      }
      const clash = seenOrders.get(front.data.order);
      if (clash) problems.push({ file, field: 'front matter order', message: `${front.data.order} is already used by ${clash}` });
      seenOrders.set(front.data.order, fileName);
      front.data.drills.forEach((id, i) => {
        const problem = drillAreaProblem(id, dirName);
        if (problem) problems.push({ file, field: `front matter drills.${i}`, message: problem });
      });
      const slug = nameMatch[2];
      if (lessons.some((l) => l.areaId === dirName && l.slug === slug)) {
        problems.push({ file, field: '(file name)', message: `another lesson in ${dirName} has the slug "${slug}"` });
      }
      const bodyMd = parsedFile.content.replace(/^\n+/, '');
      if (!bodyMd.trim()) {
        problems.push({ file, field: 'body', message: 'is empty; write the lesson below the front matter' });
        continue;
      }
      const rendered = renderer.render(bodyMd, assets);
      problems.push(...rendered.problems.map((p) => ({ file, ...p })));
      // The hash covers what a learner reads; moving a lesson or re-estimating its minutes is not a revision.
      const { title, methods, drills } = front.data;
      const contentHash = sha256(canonicalJson({ title, methods, drills, body: bodyMd }));
      lessons.push({ file, fileName, areaId: dirName, slug, frontMatter: front.data, bodyMd, bodyHtml: rendered.html, contentHash });
    }
  }

  // Blueprints
  const blueprints: BlueprintInput[] = [];
  const blueprintFiles = (await listDir(path.join(contentDir, 'blueprints'))).filter((name) => name.endsWith('.json'));
  for (const fileName of blueprintFiles) {
    const file = `blueprints/${fileName}`;
    const expectedArea = fileName.replace(/\.json$/, '');
    if (!isAreaId(expectedArea)) {
      problems.push({ file, field: '(file name)', message: `must be <area-id>.json, one of ${AREA_IDS.join(', ')}` });
      continue;
    }
    const raw = await readJson(contentDir, file, problems);
    if (raw === undefined) continue;
    const parsed = blueprintFileSchema.safeParse(raw);
    if (!parsed.success) {
      problems.push(...zodProblems(file, '', parsed.error.issues));
      continue;
    }
    if (parsed.data.area !== expectedArea) {
      problems.push({ file, field: 'area', message: `is "${parsed.data.area}" but the file is named for ${expectedArea}; they must match` });
      continue;
    }
    parsed.data.mix.forEach((entry, i) => {
      const problem = drillAreaProblem(entry.drill, expectedArea);
      if (problem) problems.push({ file, field: `mix.${i}.drill`, message: problem });
    });
    blueprints.push({ ...parsed.data, area: expectedArea, sourceHash: sha256(canonicalJson(parsed.data)) });
  }
  for (const id of AREA_IDS) {
    if (!blueprintFiles.includes(`${id}.json`)) problems.push({ file: `blueprints/${id}.json`, field: '(file)', message: 'is missing; every area needs an exam blueprint' });
  }

  if (problems.length) throw new ContentError(problems);
  return { areas, lessons, blueprints };
}

export interface SyncReport {
  areas: { inserted: number; updated: number };
  lessons: { inserted: number; updated: number; revised: number; retired: number; unchanged: number };
  blueprints: { inserted: number; updated: number; keptOperatorEdits: string[] };
}

const sameList = (a: readonly unknown[] | null | undefined, b: readonly unknown[]) => JSON.stringify(a ?? []) === JSON.stringify(b);

/** A key for pg_advisory_xact_lock: two app processes starting together take turns. */
const SYNC_LOCK_KEY = 0x706c756d; // "plum"

/**
 * Loads content/ into PostgreSQL in one transaction. Idempotent: a second run changes nothing.
 * A lesson keeps its id by area + slug; a changed file bumps its version, and progress rows stay.
 * Operator edits (area name and validity, blueprint settings) survive a sync unless the file's own
 * value for that field changed since the last sync.
 */
export async function syncContent(knex: Knex, contentDir = CONTENT_DIR): Promise<SyncReport> {
  const content = await readContent(contentDir);
  const report: SyncReport = {
    areas: { inserted: 0, updated: 0 },
    lessons: { inserted: 0, updated: 0, revised: 0, retired: 0, unchanged: 0 },
    blueprints: { inserted: 0, updated: 0, keptOperatorEdits: [] },
  };

  await knex.transaction(async (trx) => {
    await trx.raw('select pg_advisory_xact_lock(?)', [SYNC_LOCK_KEY]);

    const existingAreas = new Map((await trx('areas').select('*')).map((row) => [row.id as string, row]));
    for (const area of content.areas) {
      const fileValues = { name: area.name, validityMonths: area.validityMonths };
      const row = existingAreas.get(area.id);
      if (!row) {
        await trx('areas').insert({
          id: area.id, name: area.name, summary: area.summary, methods: area.methods, validity_months: area.validityMonths,
          sort_order: area.order, source: JSON.stringify(fileValues),
        });
        report.areas.inserted++;
        continue;
      }
      const previous = (row.source ?? {}) as Partial<typeof fileValues>;
      // A field the operator changed keeps their value until the file's own value for it changes.
      const name = row.name === previous.name || previous.name !== area.name ? area.name : row.name;
      const validity = row.validity_months === previous.validityMonths || previous.validityMonths !== area.validityMonths ? area.validityMonths : row.validity_months;
      const changes: Record<string, unknown> = {};
      if (name !== row.name) changes.name = name;
      if (validity !== row.validity_months) changes.validity_months = validity;
      if (area.summary !== row.summary) changes.summary = area.summary;
      if (!sameList(row.methods, area.methods)) changes.methods = area.methods;
      if (area.order !== row.sort_order) changes.sort_order = area.order;
      if (previous.name !== fileValues.name || previous.validityMonths !== fileValues.validityMonths) changes.source = JSON.stringify(fileValues);
      if (Object.keys(changes).length) {
        await trx('areas').where({ id: area.id }).update({ ...changes, updated_at: trx.fn.now() });
        report.areas.updated++;
      }
    }

    const existingLessons = await trx('lessons').select('id', 'area_id', 'slug', 'file_name', 'sort_order', 'minutes', 'content_hash', 'body_html', 'version', 'retired_at');
    const byKey = new Map(existingLessons.map((row) => [`${row.area_id}/${row.slug}`, row]));
    const present = new Set<string>();
    for (const lesson of content.lessons) {
      const key = `${lesson.areaId}/${lesson.slug}`;
      present.add(key);
      // Rendering, file name and position can change without the text changing: no new version for those.
      const placement = { file_name: lesson.fileName, sort_order: lesson.frontMatter.order, minutes: lesson.frontMatter.minutes, body_html: lesson.bodyHtml };
      const text = {
        title: lesson.frontMatter.title,
        methods: lesson.frontMatter.methods,
        drills: lesson.frontMatter.drills,
        body_md: lesson.bodyMd,
        content_hash: lesson.contentHash,
      };
      const row = byKey.get(key);
      if (!row) {
        await trx('lessons').insert({ area_id: lesson.areaId, slug: lesson.slug, ...placement, ...text, version: 1 });
        report.lessons.inserted++;
      } else if (row.content_hash !== lesson.contentHash) {
        await trx('lessons').where({ id: row.id }).update({ ...placement, ...text, version: row.version + 1, retired_at: null, updated_at: trx.fn.now() });
        report.lessons.revised++;
      } else if (row.retired_at || (Object.keys(placement) as (keyof typeof placement)[]).some((k) => row[k] !== placement[k])) {
        await trx('lessons').where({ id: row.id }).update({ ...placement, retired_at: null, updated_at: trx.fn.now() });
        report.lessons.updated++;
      } else {
        report.lessons.unchanged++;
      }
    }
    const gone = existingLessons.filter((row) => !row.retired_at && !present.has(`${row.area_id}/${row.slug}`)).map((row) => row.id);
    if (gone.length) {
      await trx('lessons').whereIn('id', gone).update({ retired_at: trx.fn.now(), updated_at: trx.fn.now() });
      report.lessons.retired = gone.length;
    }

    const existingBlueprints = new Map((await trx('exam_blueprints').select('*')).map((row) => [row.area_id as string, row]));
    for (const blueprint of content.blueprints) {
      const fileValues = {
        title: blueprint.title,
        timeLimitMinutes: blueprint.timeLimitMinutes,
        passMarkPct: blueprint.passMarkPct,
        questionCount: blueprint.questionCount,
        mix: blueprint.mix,
      };
      const row = existingBlueprints.get(blueprint.area);
      if (!row) {
        await trx('exam_blueprints').insert({
          area_id: blueprint.area, title: blueprint.title, time_limit_minutes: blueprint.timeLimitMinutes, pass_mark_pct: blueprint.passMarkPct,
          question_count: blueprint.questionCount, mix: JSON.stringify(blueprint.mix), source: JSON.stringify(fileValues), source_hash: blueprint.sourceHash,
        });
        report.blueprints.inserted++;
        continue;
      }
      // The unchanged file never touches the row, so an operator's edit stands.
      if (row.source_hash === blueprint.sourceHash) {
        if (row.edited_by_operator) report.blueprints.keptOperatorEdits.push(blueprint.area);
        continue;
      }
      const previous = (row.source ?? {}) as Partial<typeof fileValues>;
      const current = { title: row.title, timeLimitMinutes: row.time_limit_minutes, passMarkPct: row.pass_mark_pct, questionCount: row.question_count, mix: row.mix };
      const fileChanged = <K extends keyof typeof fileValues>(...keys: K[]) => keys.some((k) => canonicalJson(previous[k]) !== canonicalJson(fileValues[k]));
      const merged = {
        title: fileChanged('title') ? fileValues.title : current.title,
        timeLimitMinutes: fileChanged('timeLimitMinutes') ? fileValues.timeLimitMinutes : current.timeLimitMinutes,
        passMarkPct: fileChanged('passMarkPct') ? fileValues.passMarkPct : current.passMarkPct,
        // The mix and its count only make sense together, so they move as one.
        ...(fileChanged('questionCount', 'mix') ? { questionCount: fileValues.questionCount, mix: fileValues.mix } : { questionCount: current.questionCount, mix: current.mix }),
      };
      const editedByOperator = canonicalJson(merged) !== canonicalJson(fileValues);
      if (editedByOperator) report.blueprints.keptOperatorEdits.push(blueprint.area);
      await trx('exam_blueprints').where({ area_id: blueprint.area }).update({
        title: merged.title, time_limit_minutes: merged.timeLimitMinutes, pass_mark_pct: merged.passMarkPct, question_count: merged.questionCount,
        mix: JSON.stringify(merged.mix), source: JSON.stringify(fileValues), source_hash: blueprint.sourceHash, edited_by_operator: editedByOperator,
        updated_at: trx.fn.now(),
      });
      report.blueprints.updated++;
    }
  });
  return report;
}

/** One line for the start-up log. */
export function describeSync(report: SyncReport): string {
  const l = report.lessons;
  const total = l.inserted + l.updated + l.revised + l.unchanged;
  const parts = [`${total} lessons`];
  if (l.inserted) parts.push(`${l.inserted} new`);
  if (l.revised) parts.push(`${l.revised} revised`);
  if (l.updated) parts.push(`${l.updated} moved or re-rendered`);
  if (l.retired) parts.push(`${l.retired} retired`);
  const kept = report.blueprints.keptOperatorEdits;
  return `Content: ${parts.join(', ')}; ${report.areas.inserted + report.areas.updated} areas and ${report.blueprints.inserted + report.blueprints.updated} blueprints changed` +
    (kept.length ? `; operator edits kept for ${kept.join(', ')}` : '');
}
