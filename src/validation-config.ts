import type { $ZodConfig } from 'zod/v4/core';

/**
 * Zod tries `new Function` when it builds its first object schema, to see whether it may compile
 * fast parsers. Our Content Security Policy allows no eval, so the browser refuses that probe and
 * reports a policy violation on every page that loads a schema. The forms validate a handful of
 * fields, so zod's interpreted parser is plenty; the server keeps the compiled one.
 *
 * Zod reads its settings from this global when it loads (documented beside `globalConfig` in
 * zod/v4/core), so the entry chunk carries no zod code for it. Imported first by main.ts, before
 * any module that could load zod.
 */
const scope = globalThis as { __zod_globalConfig?: Partial<$ZodConfig> };
scope.__zod_globalConfig = Object.assign(scope.__zod_globalConfig ?? {}, { jitless: true });
