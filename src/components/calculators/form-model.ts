/**
 * Turns a calculation's JSON Schema and input metadata into a tree of form fields, and moves values
 * between that form (flat text keyed by dotted path, exactly as the server names fields in its 400s:
 * `systemBias.zero.pre`, `calibrationGases.1.certified`) and the `inputs` object the API takes.
 */
import type { CalculationListing, InputMeta, JsonSchema } from '../../stores/calculations';

export type FieldKind = 'number' | 'choice' | 'list' | 'numberOrList' | 'group' | 'groupList';

export interface ChoiceOption {
  value: string;
  label: string;
}

export interface FieldNode {
  kind: FieldKind;
  /** Key inside its parent object. */
  name: string;
  /** Key in the listing's `inputs` metadata, e.g. `calibrationGases[].certified`. */
  metaPath: string;
  label: string;
  unit: string;
  description?: string;
  required: boolean;
  defaultValue?: unknown;
  options?: ChoiceOption[];
  /** Lower bound is below zero: phones need a keyboard with a minus sign. */
  allowsNegative?: boolean;
  integer?: boolean;
  minItems?: number;
  maxItems?: number;
  /** What one entry of a list is called ("Velocity head, Δp"). */
  itemLabel?: string;
  /** Fields of a group, or of one row of a group list. */
  children?: FieldNode[];
}

export type FormValues = Record<string, string>;
export type RowCounts = Record<string, number>;

export const joinPath = (prefix: string, name: string | number) => (prefix ? `${prefix}.${name}` : String(name));

function typeOf(schema: JsonSchema): string | undefined {
  return Array.isArray(schema.type) ? schema.type.find((t) => t !== 'null') : schema.type;
}

const isNumeric = (schema: JsonSchema) => typeOf(schema) === 'number' || typeOf(schema) === 'integer';

function lowerBound(schema: JsonSchema): number | undefined {
  return schema.minimum ?? schema.exclusiveMinimum;
}

function nodesOf(schema: JsonSchema, metaPrefix: string, inputs: Record<string, InputMeta>): FieldNode[] {
  const required = new Set(schema.required ?? []);
  return Object.entries(schema.properties ?? {}).map(([name, property]) =>
    nodeOf(name, property, metaPrefix ? `${metaPrefix}.${name}` : name, inputs, required.has(name)),
  );
}

function nodeOf(
  name: string,
  schema: JsonSchema,
  metaPath: string,
  inputs: Record<string, InputMeta>,
  requiredInSchema: boolean,
): FieldNode {
  const meta = inputs[metaPath];
  const base: FieldNode = {
    kind: 'number',
    name,
    metaPath,
    label: meta?.label ?? schema.label ?? name,
    unit: meta?.unit ?? schema.unit ?? '',
    required: meta ? meta.required : requiredInSchema && schema.default === undefined,
  };
  const description = meta?.description ?? schema.description;
  if (description) base.description = description;
  const defaultValue = meta?.default ?? schema.default;
  if (defaultValue !== undefined) base.defaultValue = defaultValue;

  if (schema.anyOf) {
    const single = schema.anyOf.find(isNumeric);
    const list = schema.anyOf.find((s) => typeOf(s) === 'array');
    if (single && list) {
      return {
        ...base,
        kind: 'numberOrList',
        allowsNegative: (lowerBound(single) ?? 0) < 0,
        minItems: list.minItems,
        maxItems: list.maxItems,
        itemLabel: list.items?.label ?? base.label,
      };
    }
  }
  if (schema.enum || meta?.options) {
    const labels = meta?.options ?? {};
    const values = (schema.enum ?? Object.keys(labels)).map(String);
    return { ...base, kind: 'choice', options: values.map((value) => ({ value, label: labels[value] ?? value })) };
  }
  const type = typeOf(schema);
  if (type === 'array') {
    const item = schema.items ?? {};
    if (typeOf(item) === 'object') {
      return {
        ...base,
        kind: 'groupList',
        minItems: schema.minItems,
        maxItems: schema.maxItems,
        itemLabel: inputs[`${metaPath}[]`]?.label ?? item.label ?? 'Entry',
        children: nodesOf(item, `${metaPath}[]`, inputs),
      };
    }
    return {
      ...base,
      kind: 'list',
      allowsNegative: (lowerBound(item) ?? 0) < 0,
      minItems: schema.minItems,
      maxItems: schema.maxItems,
      itemLabel: item.label ?? 'Value',
    };
  }
  if (type === 'object') return { ...base, kind: 'group', children: nodesOf(schema, metaPath, inputs) };
  return { ...base, allowsNegative: (lowerBound(schema) ?? -1) < 0, integer: type === 'integer' };
}

/** The form's fields, in the order the schema lists them. */
export function buildFields(calc: CalculationListing): FieldNode[] {
  return nodesOf(calc.inputSchema, '', calc.inputs);
}

// ------------------------------------------------------------------------------------------------
// Reading what people type

const NUMBER = /^[-+]?(?:\d+\.?\d*|\.\d+)(?:e[-+]?\d+)?$/i;
const GROUPED = /^[-+]?\d{1,3}(?:,\d{3})+(?:\.\d*)?$/;
const TIMES_TEN = /^([-+]?(?:\d+\.?\d*|\.\d+))[×x*]10\^?([-+]?\d+)$/i;

/** `1234.5`, `1,234.5`, `1.23e6`, `1.23E+06`, `1.23×10^6`, `−0.62` → a number; anything else → null. */
export function parseNumber(raw: string): number | null {
  let text = raw
    .trim()
    .replace(/[\u2212\u2012\u2013]/g, '-')
    .replace(/[\s\u00a0\u2009\u202f]/g, '');
  if (!text) return null;
  if (GROUPED.test(text)) text = text.replace(/,/g, '');
  const scaled = TIMES_TEN.exec(text);
  if (scaled) text = `${scaled[1]}e${scaled[2]}`;
  if (!NUMBER.test(text)) return null;
  const value = Number(text);
  return Number.isFinite(value) ? value : null;
}

/** Entries of a pasted column or row: new lines, tabs, commas, semicolons or spaces separate them. */
export function splitEntries(raw: string): string[] {
  return raw.split(/[\s,;]+/).filter(Boolean);
}

export interface ListReading {
  numbers: number[];
  /** Entries that are not numbers, with their 1-based position. */
  rejected: { position: number; text: string }[];
  count: number;
}

export function readList(raw: string): ListReading {
  const entries = splitEntries(raw);
  const numbers: number[] = [];
  const rejected: ListReading['rejected'] = [];
  entries.forEach((text, index) => {
    const value = parseNumber(text);
    if (value === null) rejected.push({ position: index + 1, text });
    else numbers.push(value);
  });
  return { numbers, rejected, count: entries.length };
}

/** Unreadable text is sent as typed, so the server names the problem in its own words. */
const numberOrText = (text: string) => parseNumber(text) ?? text.trim();

export function isBlank(node: FieldNode, path: string, values: FormValues, rows: RowCounts): boolean {
  switch (node.kind) {
    case 'group':
      return (node.children ?? []).every((child) => isBlank(child, joinPath(path, child.name), values, rows));
    case 'groupList':
      return (rows[path] ?? 0) === 0;
    case 'list':
    case 'numberOrList':
      return splitEntries(values[path] ?? '').length === 0;
    default:
      return !(values[path] ?? '').trim();
  }
}

function valueOf(node: FieldNode, path: string, values: FormValues, rows: RowCounts): unknown {
  const raw = values[path] ?? '';
  switch (node.kind) {
    case 'number':
      return raw.trim() ? numberOrText(raw) : undefined;
    case 'choice':
      return raw || undefined;
    case 'list': {
      const entries = splitEntries(raw);
      return entries.length ? entries.map(numberOrText) : undefined;
    }
    case 'numberOrList': {
      const entries = splitEntries(raw);
      if (entries.length === 0) return undefined;
      return entries.length === 1 ? numberOrText(entries[0]) : entries.map(numberOrText);
    }
    case 'group': {
      if (!node.required && isBlank(node, path, values, rows)) return undefined;
      return collectInputs(node.children ?? [], path, values, rows);
    }
    case 'groupList': {
      const count = rows[path] ?? 0;
      if (count === 0) return undefined;
      // Blank rows are sent too, so the server's row numbers match the rows on screen.
      return Array.from({ length: count }, (_, index) => collectInputs(node.children ?? [], joinPath(path, index), values, rows));
    }
  }
}

export function collectInputs(
  nodes: FieldNode[],
  prefix: string,
  values: FormValues,
  rows: RowCounts,
  include: (node: FieldNode) => boolean = () => true,
): Record<string, unknown> {
  const inputs: Record<string, unknown> = {};
  for (const node of nodes) {
    if (!include(node)) continue;
    const value = valueOf(node, joinPath(prefix, node.name), values, rows);
    if (value !== undefined) inputs[node.name] = value;
  }
  return inputs;
}

/** Text for one field from an inputs value (a saved run, a carried result). */
export function textFor(node: FieldNode, value: unknown): string | null {
  if (value === undefined || value === null) return null;
  switch (node.kind) {
    case 'number':
      return typeof value === 'number' || typeof value === 'string' ? String(value) : null;
    case 'choice':
      return typeof value === 'string' && (node.options ?? []).some((o) => o.value === value) ? value : null;
    case 'list':
    case 'numberOrList':
      if (Array.isArray(value)) return value.every((v) => typeof v === 'number' || typeof v === 'string') ? value.join('\n') : null;
      return typeof value === 'number' ? String(value) : null;
    default:
      return null;
  }
}

/** Writes an inputs object into form text; returns the paths it wrote. */
export function spreadInputs(
  nodes: FieldNode[],
  prefix: string,
  inputs: Record<string, unknown>,
  values: FormValues,
  rows: RowCounts,
): string[] {
  const written: string[] = [];
  for (const node of nodes) {
    const value = inputs[node.name];
    const path = joinPath(prefix, node.name);
    if (value === undefined) continue;
    if (node.kind === 'group') {
      if (value && typeof value === 'object' && !Array.isArray(value)) {
        written.push(...spreadInputs(node.children ?? [], path, value as Record<string, unknown>, values, rows));
      }
    } else if (node.kind === 'groupList') {
      if (Array.isArray(value)) {
        clearRows(node, path, values, rows);
        rows[path] = value.length;
        value.forEach((row, index) => {
          if (row && typeof row === 'object') {
            written.push(...spreadInputs(node.children ?? [], joinPath(path, index), row as Record<string, unknown>, values, rows));
          }
        });
      }
    } else {
      const text = textFor(node, value);
      if (text !== null) {
        values[path] = text;
        written.push(path);
      }
    }
  }
  return written;
}

function clearRows(node: FieldNode, path: string, values: FormValues, rows: RowCounts) {
  const prefix = `${path}.`;
  for (const key of Object.keys(values)) if (key.startsWith(prefix)) delete values[key];
  for (const key of Object.keys(rows)) if (key.startsWith(prefix)) delete rows[key];
  rows[path] = 0;
}

/** Starting text: schema defaults, and the minimum number of rows for row groups. */
export function initialValues(nodes: FieldNode[], prefix = '', values: FormValues = {}, rows: RowCounts = {}) {
  for (const node of nodes) {
    const path = joinPath(prefix, node.name);
    if (node.kind === 'group') initialValues(node.children ?? [], path, values, rows);
    else if (node.kind === 'groupList') {
      const count = Math.max(node.minItems ?? 1, 1);
      rows[path] = count;
      for (let index = 0; index < count; index += 1) initialValues(node.children ?? [], joinPath(path, index), values, rows);
    } else {
      const text = node.defaultValue === undefined ? null : textFor(node, node.defaultValue);
      values[path] = text ?? '';
    }
  }
  return { values, rows };
}

/** Removes row `index` of a row group and closes the gap, so row numbers stay 1..n. */
export function removeRow(path: string, index: number, values: FormValues, rows: RowCounts) {
  const count = rows[path] ?? 0;
  const shift = (from: number, to: number) => {
    const fromPrefix = `${path}.${from}.`;
    for (const key of Object.keys(values)) {
      if (key.startsWith(fromPrefix)) {
        values[`${path}.${to}.${key.slice(fromPrefix.length)}`] = values[key];
        delete values[key];
      }
    }
  };
  const doomed = `${path}.${index}.`;
  for (const key of Object.keys(values)) if (key.startsWith(doomed)) delete values[key];
  for (let from = index + 1; from < count; from += 1) shift(from, from - 1);
  rows[path] = Math.max(count - 1, 0);
}

/** Every leaf and container path currently on the form, for placing server messages. */
export function knownPaths(nodes: FieldNode[], prefix: string, rows: RowCounts, into = new Map<string, FieldNode>()) {
  for (const node of nodes) {
    const path = joinPath(prefix, node.name);
    into.set(path, node);
    if (node.kind === 'group') knownPaths(node.children ?? [], path, rows, into);
    if (node.kind === 'groupList') {
      for (let index = 0; index < (rows[path] ?? 0); index += 1) knownPaths(node.children ?? [], joinPath(path, index), rows, into);
    }
  }
  return into;
}

export interface PlacedProblem {
  /** The form path that shows the message; null when no field on the form fits. */
  path: string | null;
  /** Where the server pointed, without the leading `inputs.`. */
  serverPath: string;
  /** The sentence shown beside the field. */
  message: string;
  /** The server's sentence, unchanged. */
  original: string;
}

const capitalise = (text: string) => text.charAt(0).toUpperCase() + text.slice(1);

/**
 * Finds the field a server message belongs to: the exact path, or the nearest enclosing field
 * (a list entry such as `deltaP_inH2O.3` is shown at its list as "Entry 4 …").
 */
export function placeProblem(field: string, message: string, fields: Map<string, FieldNode>): PlacedProblem {
  const serverPath = field.replace(/^inputs\.?/, '');
  const parts = serverPath ? serverPath.split('.') : [];
  for (let length = parts.length; length > 0; length -= 1) {
    const path = parts.slice(0, length).join('.');
    const node = fields.get(path);
    if (!node) continue;
    const rest = message.startsWith(`${serverPath} `) ? message.slice(serverPath.length + 1) : null;
    const extra = parts.slice(length);
    let shown = rest === null ? message : capitalise(rest);
    if (rest !== null && extra.length === 1 && /^\d+$/.test(extra[0]) && (node.kind === 'list' || node.kind === 'numberOrList')) {
      shown = `Entry ${Number(extra[0]) + 1} ${rest}`;
    } else if (rest !== null && extra.length > 0) {
      shown = `${extra.join('.')} ${rest}`;
    }
    return { path, serverPath, message: shown, original: message };
  }
  return { path: null, serverPath, message, original: message };
}

function canonical(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(canonical);
  if (value && typeof value === 'object') {
    return Object.fromEntries(
      Object.keys(value as Record<string, unknown>)
        .sort()
        .map((key) => [key, canonical((value as Record<string, unknown>)[key])]),
    );
  }
  return value;
}

/** Same inputs whatever the key order (saved runs come back from the database with keys reordered). */
export function sameInputs(a: unknown, b: unknown): boolean {
  return JSON.stringify(canonical(a)) === JSON.stringify(canonical(b));
}
