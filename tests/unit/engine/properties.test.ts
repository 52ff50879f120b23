/**
 * Property tests (fast-check) over every calculation: random and hostile inputs give either a
 * result whose every number is finite, or an InputError with a non-empty list of named fields.
 * Nothing else is ever thrown, and no InputError hides an internal defect (no `cause`).
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { z } from 'zod';
import { calculate, calculationIds, InputError, type CalculationId } from '../../../server/engine';
import { calculationSchemas } from '../../../shared/calculations/schemas';
import { examples } from './examples';

type JsonSchema = {
  type?: string;
  minimum?: number;
  maximum?: number;
  exclusiveMinimum?: number;
  exclusiveMaximum?: number;
  multipleOf?: number;
  enum?: string[];
  items?: JsonSchema;
  minItems?: number;
  maxItems?: number;
  properties?: Record<string, JsonSchema>;
  required?: string[];
  anyOf?: JsonSchema[];
};

const hostileValue: fc.Arbitrary<unknown> = fc.oneof(
  fc.double(), // includes NaN, ±Infinity, −0 and huge magnitudes
  fc.constantFrom(NaN, Infinity, -Infinity, -0, 0, 1e308, -1e308, Number.MIN_VALUE, -1, 20.9, 1),
  fc.integer(),
  fc.string({ maxLength: 12 }),
  fc.constantFrom('', '12', 'NaN', '1e3', 'Infinity'),
  fc.constantFrom(null, undefined, true, false),
  fc.constant([]),
  fc.array(fc.double(), { maxLength: 30 }),
  fc.array(fc.oneof(fc.double(), fc.string(), fc.constant(null)), { maxLength: 14 }),
  fc.object({ maxDepth: 2 }),
  fc.dictionary(fc.constantFrom('certified', 'directResponse', 'pre', 'post', 'zero', 'upscale'), fc.oneof(fc.double(), fc.object())),
);

/** Values inside the schema's declared ranges, built from its own JSON Schema. */
function fromJsonSchema(schema: JsonSchema): fc.Arbitrary<unknown> {
  if (schema.anyOf) return fc.oneof(...schema.anyOf.map(fromJsonSchema));
  if (schema.enum) return fc.constantFrom(...schema.enum);
  switch (schema.type) {
    case 'integer': {
      const step = schema.multipleOf ?? 1;
      const min = Math.ceil((schema.minimum ?? -1e6) / step);
      const max = Math.floor((schema.maximum ?? 1e6) / step);
      return fc.integer({ min, max }).map((k) => k * step);
    }
    case 'number': {
      const min = schema.exclusiveMinimum ?? schema.minimum ?? -1e9;
      const max = schema.exclusiveMaximum ?? schema.maximum ?? 1e9;
      return fc.oneof(
        fc.double({
          min,
          max,
          minExcluded: schema.exclusiveMinimum !== undefined,
          maxExcluded: schema.exclusiveMaximum !== undefined,
          noNaN: true,
        }),
        fc.constantFrom(min, max, (min + max) / 2).filter(
          (v) => (schema.exclusiveMinimum === undefined || v > min) && (schema.exclusiveMaximum === undefined || v < max),
        ),
      );
    }
    case 'array':
      return fc.array(fromJsonSchema(schema.items ?? {}), {
        minLength: schema.minItems ?? 0,
        maxLength: Math.min(schema.maxItems ?? 30, 30),
      });
    case 'object': {
      const props = Object.fromEntries(Object.entries(schema.properties ?? {}).map(([k, v]) => [k, fromJsonSchema(v)]));
      return fc.record(props, { requiredKeys: schema.required ?? [] });
    }
    default:
      return hostileValue;
  }
}

const jsonSchemas = Object.fromEntries(
  calculationIds.map((id) => [id, z.toJSONSchema(calculationSchemas[id], { io: 'input' }) as JsonSchema]),
) as Record<CalculationId, JsonSchema>;
const fieldNames = (id: CalculationId) => Object.keys(jsonSchemas[id].properties ?? {});

const isFiniteEverywhere = (value: unknown): boolean => {
  if (typeof value === 'number') return Number.isFinite(value);
  if (Array.isArray(value)) return value.every(isFiniteEverywhere);
  if (value !== null && typeof value === 'object') return Object.values(value).every(isFiniteEverywhere);
  return true;
};

/** Runs one calculation and checks the contract; returns whether it produced a result. */
function honoursContract(id: CalculationId, inputs: unknown, options?: Parameters<typeof calculate>[2]): boolean {
  let result;
  try {
    result = calculate(id, inputs, options);
  } catch (error) {
    if (!(error instanceof InputError)) throw new Error(`${id} threw something other than InputError: ${String(error)}`);
    if (error.cause !== undefined) throw new Error(`${id} hid an internal error: ${String(error.cause)}`);
    expect(error.fields.length).toBeGreaterThan(0);
    for (const f of error.fields) {
      expect(typeof f.field).toBe('string');
      expect(f.field.length).toBeGreaterThan(0);
      expect(f.message.startsWith(f.field)).toBe(true);
      expect(f.message).not.toMatch(/Invalid input|expected (number|string|array|object)|received/);
    }
    return false;
  }
  expect(isFiniteEverywhere(result.results)).toBe(true);
  for (const s of result.steps) {
    expect(typeof s.value === 'boolean' || Number.isFinite(s.value)).toBe(true);
    expect(s.source.length).toBeGreaterThan(0);
    expect(s.equation.length).toBeGreaterThan(0);
  }
  expect(result.warnings.every((w) => typeof w === 'string' && w.length > 0)).toBe(true);
  return true;
}

const RUNS = 250;

describe.each(calculationIds)('%s: random and hostile inputs', (id) => {
  const example = examples[id] as Record<string, unknown>;
  const names = fieldNames(id);

  it('anything at all as inputs', () => {
    fc.assert(fc.property(fc.anything({ withNullPrototype: true, withBigInt: true }), (inputs) => void honoursContract(id, inputs)), {
      numRuns: RUNS,
    });
  });

  it('its own field names with hostile values (strings, NaN, ±Infinity, null, [], objects, huge numbers)', () => {
    const arb = fc.record(Object.fromEntries(names.map((n) => [n, hostileValue])), { requiredKeys: [] });
    fc.assert(fc.property(arb, (inputs) => void honoursContract(id, inputs)), { numRuns: RUNS });
  });

  it('a valid example with some fields replaced by hostile values', () => {
    const arb = fc
      .record(Object.fromEntries(names.map((n) => [n, fc.option(hostileValue, { freq: 3 })])))
      .map((replacements) => {
        const inputs: Record<string, unknown> = { ...example };
        for (const [k, v] of Object.entries(replacements)) if (v !== null) inputs[k] = v;
        return inputs;
      });
    fc.assert(fc.property(arb, (inputs) => void honoursContract(id, inputs)), { numRuns: RUNS });
  });

  it('values anywhere inside the declared ranges (from the JSON Schema), including the edges', () => {
    fc.assert(fc.property(fromJsonSchema(jsonSchemas[id]), (inputs) => void honoursContract(id, inputs)), { numRuns: RUNS });
  });

  it('a valid example with fields redrawn inside their ranges mostly calculates, always within the contract', () => {
    const properties = jsonSchemas[id].properties ?? {};
    const keys = Object.keys(example);
    const arb = fc
      .record(Object.fromEntries(keys.map((k) => [k, fc.option(fromJsonSchema(properties[k]), { freq: 2 })])))
      .map((redrawn) => {
        const inputs: Record<string, unknown> = { ...example };
        for (const [k, v] of Object.entries(redrawn)) if (v !== null) inputs[k] = v;
        return inputs;
      });
    let ok = 0;
    fc.assert(
      fc.property(arb, (inputs) => {
        if (honoursContract(id, inputs)) ok++;
      }),
      { numRuns: RUNS },
    );
    // Not a property: a guard that this test really reaches the arithmetic, not only validation.
    expect(ok).toBeGreaterThan(RUNS * 0.1);
  });

  it('overrides of its numeric steps with any number (carried-forward values)', () => {
    const base = calculate(id, example);
    const keys = base.steps.filter((s) => typeof s.value === 'number').map((s) => s.key);
    const arb = fc.dictionary(fc.oneof(fc.constantFrom(...keys), fc.string({ maxLength: 8 })), fc.oneof(fc.double(), hostileValue), {
      maxKeys: 4,
    });
    fc.assert(fc.property(arb, (overrides) => void honoursContract(id, example, { overrides: overrides as Record<string, number> })), {
      numRuns: RUNS,
    });
  });

  it('the engine’s compiled parser accepts and rejects exactly what the schema does (z.compile vs runtime)', () => {
    const compiled = z.compile(calculationSchemas[id]);
    const arb = fc.oneof(fromJsonSchema(jsonSchemas[id]), fc.record(Object.fromEntries(names.map((n) => [n, hostileValue])), { requiredKeys: [] }));
    fc.assert(
      fc.property(arb, (inputs) => {
        const fast = compiled.safeParse(inputs);
        const slow = calculationSchemas[id].safeParse(inputs);
        expect(fast.success).toBe(slow.success);
        if (fast.success && slow.success) expect(fast.data).toEqual(slow.data);
        if (!fast.success && !slow.success) expect(fast.error.issues).toEqual(slow.error.issues);
      }),
      { numRuns: RUNS },
    );
  });
});

describe('hostile calculation ids and options', () => {
  it('any id that is not a calculation is an InputError on "id"', () => {
    fc.assert(
      fc.property(fc.anything().filter((x) => !calculationIds.includes(x as CalculationId)), (id) => {
        try {
          calculate(id as CalculationId, {});
        } catch (error) {
          expect(error).toBeInstanceOf(InputError);
          expect((error as InputError).fields.map((f) => f.field)).toEqual(['id']);
          return;
        }
        throw new Error('accepted a bad id');
      }),
      { numRuns: 200 },
    );
  });
  it('any options value is either ignored or an InputError', () => {
    fc.assert(
      fc.property(fc.anything(), (options) => void honoursContract('stack-flow', examples['stack-flow'], options as never)),
      { numRuns: 200 },
    );
  });
});
