import { badRequest, invalidParam, missingParam, unknownParam } from './errors';

/**
 * Readers for Stripe's form-encoded parameters after qs has parsed the bracket notation
 * (`line_items[0][price]`, `expand[]`, `metadata[key]`). Every value arrives as a string,
 * an array or a nested object; these helpers turn them into typed values or throw the
 * error Stripe would send.
 */
export type Params = Record<string, unknown>;
export type Metadata = Record<string, string>;

const isRecord = (value: unknown): value is Params =>
  typeof value === 'object' && value !== null && !Array.isArray(value);

/** Rejects parameters the fake does not model instead of silently ignoring them. */
export function allowOnly(params: Params, allowed: readonly string[], prefix = ''): void {
  for (const key of Object.keys(params)) {
    if (key === 'expand' && prefix === '') continue;
    if (!allowed.includes(key)) throw unknownParam(prefix ? `${prefix}[${key}]` : key);
  }
}

export function readString(params: Params, name: string, label = name): string | undefined {
  const value = params[name];
  if (value === undefined) return undefined;
  if (typeof value !== 'string') throw invalidParam(label, `Invalid string: ${label} must be a string.`);
  return value;
}

export function requireString(params: Params, name: string, label = name): string {
  const value = readString(params, name, label);
  if (value === undefined || value === '') throw missingParam(label);
  return value;
}

export function readEnum<T extends string>(params: Params, name: string, choices: readonly T[], label = name): T | undefined {
  const value = readString(params, name, label);
  if (value === undefined) return undefined;
  if (!(choices as readonly string[]).includes(value)) {
    throw invalidParam(label, `Invalid ${label}: must be one of ${choices.join(', ')}.`, 'parameter_invalid');
  }
  return value as T;
}

export function readInteger(params: Params, name: string, options: { min?: number; max?: number } = {}, label = name): number | undefined {
  const raw = readString(params, name, label);
  if (raw === undefined) return undefined;
  if (!/^-?\d+$/.test(raw)) throw invalidParam(label, `Invalid integer: ${raw}`, 'parameter_invalid_integer');
  const value = Number(raw);
  if (options.min !== undefined && value < options.min) {
    throw invalidParam(label, `This value must be greater than or equal to ${options.min}.`, 'parameter_invalid_integer');
  }
  if (options.max !== undefined && value > options.max) {
    throw invalidParam(label, `This value must be less than or equal to ${options.max}.`, 'parameter_invalid_integer');
  }
  return value;
}

export function readBoolean(params: Params, name: string, label = name): boolean | undefined {
  const raw = readString(params, name, label);
  if (raw === undefined) return undefined;
  if (raw === 'true') return true;
  if (raw === 'false') return false;
  throw invalidParam(label, `Invalid boolean: ${raw}`, 'parameter_invalid_boolean');
}

export function readObject(params: Params, name: string, label = name): Params | undefined {
  const value = params[name];
  if (value === undefined) return undefined;
  if (!isRecord(value)) throw invalidParam(label, `Invalid object: ${label} must be a hash.`, 'parameter_invalid');
  return value;
}

/** Arrays arrive as `a[0]=x` or `a[]=x`; qs turns very long indexed lists into objects, so accept both. */
export function readArray(params: Params, name: string, label = name): unknown[] | undefined {
  const value = params[name];
  if (value === undefined) return undefined;
  if (Array.isArray(value)) return value;
  if (typeof value === 'string') return [value];
  if (isRecord(value) && Object.keys(value).every((key) => /^\d+$/.test(key))) {
    return Object.keys(value)
      .sort((a, b) => Number(a) - Number(b))
      .map((key) => value[key]);
  }
  throw invalidParam(label, `Invalid array: ${label} must be a list.`, 'parameter_invalid');
}

export function readStringArray(params: Params, name: string, label = name): string[] | undefined {
  const items = readArray(params, name, label);
  if (!items) return undefined;
  return items.map((item, index) => {
    if (typeof item !== 'string') throw invalidParam(`${label}[${index}]`, `Invalid string: ${label}[${index}]`);
    return item;
  });
}

export const readExpand = (params: Params): string[] => readStringArray(params, 'expand') ?? [];

const METADATA_MAX_KEYS = 50; // Stripe's documented limits for metadata
const METADATA_KEY_MAX = 40;
const METADATA_VALUE_MAX = 500;

/**
 * Stripe merges metadata on update: a key set to '' is removed, and `metadata=''` clears it all.
 * Returns the merged result.
 */
export function mergeMetadata(current: Metadata, params: Params, name = 'metadata', label = name): Metadata {
  const value = params[name];
  if (value === undefined) return current;
  if (value === '') return {};
  if (!isRecord(value)) throw invalidParam(label, `Invalid object: ${label} must be a hash of strings.`);
  const merged: Metadata = { ...current };
  for (const [key, raw] of Object.entries(value)) {
    if (typeof raw !== 'string') throw invalidParam(`${label}[${key}]`, `Invalid string: ${label}[${key}]`);
    if (key.length > METADATA_KEY_MAX) {
      throw invalidParam(`${label}[${key}]`, `Metadata keys can have up to ${METADATA_KEY_MAX} characters.`);
    }
    if (raw.length > METADATA_VALUE_MAX) {
      throw invalidParam(`${label}[${key}]`, `Metadata values can have up to ${METADATA_VALUE_MAX} characters.`);
    }
    if (raw === '') delete merged[key];
    else merged[key] = raw;
  }
  if (Object.keys(merged).length > METADATA_MAX_KEYS) {
    throw badRequest(`Metadata can have up to ${METADATA_MAX_KEYS} keys.`, label);
  }
  return merged;
}

export interface PageParams {
  limit: number;
  startingAfter?: string;
  endingBefore?: string;
}

export function readPage(params: Params): PageParams {
  return {
    limit: readInteger(params, 'limit', { min: 1, max: 100 }) ?? 10,
    startingAfter: readString(params, 'starting_after'),
    endingBefore: readString(params, 'ending_before'),
  };
}
