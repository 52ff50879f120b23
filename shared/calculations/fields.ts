/**
 * Builders for calculation input fields. Every field carries `{ label, unit }` metadata (read by
 * form generators and copied into JSON Schema by `z.toJSONSchema`) and error messages that are
 * plain predicates ("must be a number between -40 and 2500"); `issuesToProblems` puts the field
 * name in front. Messages are built once, when the schema is built, never per parse.
 */
import { z } from 'zod';

// A type alias, not an interface: zod's `.meta()` wants an object type with an index signature.
export type FieldMeta = {
  label: string;
  unit: string;
  description?: string;
  /** For choice fields: value → label, in display order. */
  options?: Record<string, string>;
};

export interface NumberFieldSpec {
  label: string;
  unit: string;
  description?: string;
  min: number;
  max: number;
  minExclusive?: boolean;
  maxExclusive?: boolean;
  integer?: boolean;
  even?: boolean;
  /** Added after the range, e.g. why 20.9 % O2 is excluded. */
  hint?: string;
  /** Replaces the sentence when the value is exactly zero. */
  zeroMessage?: string;
}

export function formatLimit(value: number): string {
  const abs = Math.abs(value);
  if (abs !== 0 && (abs >= 1e6 || abs < 1e-3)) return value.toExponential().replace('e+', 'e');
  return String(value);
}

export function rangePhrase(spec: NumberFieldSpec): string {
  const kind = spec.even ? 'an even whole number' : spec.integer ? 'a whole number' : 'a number';
  const min = formatLimit(spec.min);
  const max = formatLimit(spec.max);
  let phrase: string;
  if (spec.minExclusive && spec.maxExclusive) phrase = `${kind} above ${min} and below ${max}`;
  else if (spec.minExclusive) phrase = `${kind} above ${min} and at most ${max}`;
  else if (spec.maxExclusive) phrase = `${kind} from ${min} up to but not including ${max}`;
  else phrase = `${kind} between ${min} and ${max}`;
  return spec.hint ? `${phrase} (${spec.hint})` : phrase;
}

function numberMessages(spec: NumberFieldSpec): (issue: { input?: unknown }) => string {
  const phrase = rangePhrase(spec);
  const mustBe = `must be ${phrase}`;
  const missing = `is missing; it must be ${phrase}`;
  const zero = spec.zeroMessage;
  return (issue) => {
    if (issue.input === undefined) return missing;
    if (zero !== undefined && issue.input === 0) return zero;
    return mustBe;
  };
}

/** The bare number schema with its range checks and messages, without metadata. */
export function numberSchema(spec: NumberFieldSpec): z.ZodNumber {
  const error = numberMessages(spec);
  let schema = z.number({ error });
  schema = spec.minExclusive ? schema.gt(spec.min, { error }) : schema.min(spec.min, { error });
  schema = spec.maxExclusive ? schema.lt(spec.max, { error }) : schema.max(spec.max, { error });
  if (spec.integer || spec.even) schema = schema.int({ error });
  if (spec.even) schema = schema.multipleOf(2, { error });
  return schema;
}

function metaOf(spec: { label: string; unit: string; description?: string }): FieldMeta {
  const meta: FieldMeta = { label: spec.label, unit: spec.unit };
  if (spec.description) meta.description = spec.description;
  return meta;
}

export function numberField(spec: NumberFieldSpec) {
  return numberSchema(spec).meta(metaOf(spec));
}

export function optionalNumberField(spec: NumberFieldSpec) {
  return numberSchema(spec).optional().meta(metaOf(spec));
}

export function defaultedNumberField(spec: NumberFieldSpec, defaultValue: number) {
  return numberSchema(spec).default(defaultValue).meta(metaOf(spec));
}

export interface ListSpec {
  label: string;
  unit: string;
  description?: string;
  minItems: number;
  maxItems: number;
  /** What one entry is called in messages, singular and plural: ['reading', 'readings']. */
  noun: [string, string];
}

function listMessages(list: ListSpec) {
  const [one, many] = list.noun;
  const count = list.minItems === list.maxItems ? `${list.minItems}` : `${list.minItems} to ${list.maxItems}`;
  const shape = `a list of ${count} ${list.maxItems === 1 ? one : many}`;
  return {
    type: (issue: { input?: unknown }) =>
      issue.input === undefined ? `is missing; it must be ${shape}` : `must be ${shape}`,
    tooFew: `must list at least ${list.minItems} ${list.minItems === 1 ? one : many}`,
    tooMany: `must list at most ${list.maxItems} ${list.maxItems === 1 ? one : many}`,
  };
}

export function listSchema<T extends z.ZodType>(item: T, list: ListSpec) {
  const messages = listMessages(list);
  return z
    .array(item, { error: messages.type })
    .min(list.minItems, { error: messages.tooFew })
    .max(list.maxItems, { error: messages.tooMany });
}

export function listField<T extends z.ZodType>(item: T, list: ListSpec) {
  return listSchema(item, list).meta(metaOf(list));
}

export function numberListField(item: NumberFieldSpec, list: ListSpec) {
  return listField(numberSchema(item).meta(metaOf(item)), list);
}

export interface ChoiceSpec<V extends string> {
  label: string;
  description?: string;
  /** value → label, in display order. */
  options: Record<V, string>;
}

function choiceSchema<V extends string>(spec: ChoiceSpec<V>) {
  const values = Object.keys(spec.options) as [V, ...V[]];
  const list = values.join(', ');
  const error = (issue: { input?: unknown }) =>
    issue.input === undefined ? `is missing; it must be one of ${list}` : `must be one of ${list}`;
  return z.enum(values, { error });
}

function choiceMeta<V extends string>(spec: ChoiceSpec<V>): FieldMeta {
  const meta: FieldMeta = { label: spec.label, unit: '', options: { ...spec.options } };
  if (spec.description) meta.description = spec.description;
  return meta;
}

export function choiceField<V extends string>(spec: ChoiceSpec<V>) {
  return choiceSchema(spec).meta(choiceMeta(spec));
}

export function optionalChoiceField<V extends string>(spec: ChoiceSpec<V>) {
  return choiceSchema(spec).optional().meta(choiceMeta(spec));
}

/** A nested group of fields (e.g. one calibration gas). Unknown keys are refused, as at the top. */
export function groupSchema<S extends z.ZodRawShape>(shape: S) {
  const names = Object.keys(shape).join(', ');
  const error = (issue: { code?: string; input?: unknown }) => {
    if (issue.code !== 'invalid_type') return undefined;
    return issue.input === undefined
      ? `is missing; it must be an object with ${names}`
      : `must be an object with ${names}`;
  };
  return z.strictObject(shape, { error });
}

/** The top-level inputs object of one calculation. */
export function inputsObject<S extends z.ZodRawShape>(shape: S) {
  const names = Object.keys(shape).join(', ');
  const error = (issue: { code?: string }) =>
    issue.code === 'invalid_type' ? `must be an object with the fields ${names}` : undefined;
  return z.strictObject(shape, { error });
}
