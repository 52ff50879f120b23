/**
 * The shared schemas and metadata: every schema converts to JSON Schema with zod's native
 * `z.toJSONSchema`, carries the labels and units a form needs, and the engine's results and steps
 * line up with the published output metadata (keys, units, dependsOn order).
 */
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { calculate, calculationIds, type CalculationResult } from '../../../server/engine';
import { calculationMeta, calculationSchemas, inputJsonSchema } from '../../../shared/calculations';
import { examples } from './examples';

/** Follows a dotted step key (`points.3.distanceFromWall_in`) into the results. */
function at(results: CalculationResult['results'], key: string): unknown {
  let value: unknown = results;
  for (const part of key.split('.')) {
    if (value === null || typeof value !== 'object') return undefined;
    value = (value as Record<string, unknown>)[part];
  }
  return value;
}

describe('JSON Schema (z.toJSONSchema, zod 4 native)', () => {
  it('lists all 14 calculation ids, as ENGINE.md fixes them', () => {
    expect([...calculationIds].sort()).toEqual(
      [
        'traverse-points',
        'gas-composition',
        'moisture',
        'stack-flow',
        'isokinetic',
        'particulate',
        'mass-emission-rate',
        'f-factor-rate',
        'diluent-correction',
        'concentration-conversion',
        'number-density',
        'chemical-lifetime',
        'analyzer-checks',
        'relative-accuracy',
      ].sort(),
    );
    expect(Object.keys(calculationSchemas).sort()).toEqual([...calculationIds].sort());
  });

  describe.each(calculationIds)('%s', (id) => {
    it('converts for input and output without throwing, and keeps labels, units and ranges', () => {
      for (const io of ['input', 'output'] as const) {
        const json = z.toJSONSchema(calculationSchemas[id], { io }) as {
          type: string;
          properties: Record<string, { label?: string; unit?: string }>;
          additionalProperties: boolean;
        };
        expect(json.type).toBe('object');
        expect(json.additionalProperties).toBe(false);
        for (const [key, property] of Object.entries(json.properties)) {
          expect(typeof property.label, `${id}.${key} label`).toBe('string');
          expect(typeof property.unit, `${id}.${key} unit`).toBe('string');
        }
        expect(JSON.parse(JSON.stringify(json))).toEqual(json);
      }
    });

    it('metadata names every input and every result key the engine returns, with matching step units', () => {
      const meta = calculationMeta[id];
      expect(meta.title.length).toBeGreaterThan(0);
      const topInputs = Object.keys(meta.inputs).filter((k) => !k.includes('.') && !k.includes('['));
      expect(topInputs.sort()).toEqual(Object.keys(calculationSchemas[id].shape).sort());
      const r = calculate(id, examples[id]);
      for (const key of Object.keys(r.results)) expect(meta.outputs[key], `${id} output ${key}`).toBeDefined();
      for (const s of r.steps) {
        if (Object.hasOwn(meta.outputs, s.key)) expect(s.unit, `${id} step ${s.key}`).toBe(meta.outputs[s.key].unit);
      }
    });

    it('steps: keys are unique, dependsOn names earlier steps only, and a step whose key is a result path has its value', () => {
      const r = calculate(id, examples[id]);
      const seen = new Set<string>();
      for (const s of r.steps) {
        expect(seen.has(s.key), `${id} duplicate step ${s.key}`).toBe(false);
        for (const dep of s.dependsOn) expect(seen.has(dep), `${id} ${s.key} depends on later or unknown ${dep}`).toBe(true);
        seen.add(s.key);
        const resultValue = at(r.results, s.key);
        if (resultValue !== undefined) expect(resultValue, `${id} ${s.key}`).toBe(s.value);
      }
      // Every numeric result at the top level is the value of a step of the same key, or echoes an input.
      const stepKeys = new Set(r.steps.map((s) => s.key));
      const given = Object.values(examples[id] as Record<string, unknown>);
      for (const [key, value] of Object.entries(r.results)) {
        if (typeof value === 'number' && key !== 'runCount') expect(stepKeys.has(key) || given.includes(value), `${id} ${key}`).toBe(true);
      }
    });
  });

  it('inputJsonSchema leaves fields with a default optional (io: input), unlike the output form', () => {
    const input = inputJsonSchema('stack-flow') as { required: string[]; properties: Record<string, { default?: number }> };
    expect(input.required).not.toContain('pitotCoefficient');
    expect(input.properties.pitotCoefficient.default).toBe(0.84);
    expect(input.required).toEqual(expect.arrayContaining(['deltaP_inH2O', 'stackTemp_F', 'moistureFraction']));
    const output = z.toJSONSchema(calculationSchemas['stack-flow']) as { required: string[] };
    expect(output.required).toContain('pitotCoefficient');
  });

  it('defaults reach the form metadata (Cp 0.84; 20 °C and 101.325 kPa; port length 0)', () => {
    expect(calculationMeta['stack-flow'].inputs.pitotCoefficient.default).toBe(0.84); // ENGINE.md default
    expect(calculationMeta['concentration-conversion'].inputs.temperature_C.default).toBe(20);
    expect(calculationMeta['concentration-conversion'].inputs.pressure_kPa.default).toBe(101.325);
    expect(calculationMeta['traverse-points'].inputs.portLength_in.default).toBe(0);
    expect(calculationMeta['stack-flow'].inputs.stackTemp_F.unit).toBe('°F');
    expect(calculationMeta['f-factor-rate'].inputs.fuel.options?.naturalGas).toBe('Natural gas');
    expect(calculationMeta['analyzer-checks'].inputs['systemBias.upscale.pre'].unit).toBe('ppmv');
    expect(calculationMeta['analyzer-checks'].inputs['calibrationGases[].certified'].required).toBe(true);
  });

  it('the calculation results are plain JSON (a route can send them as they are)', () => {
    for (const id of calculationIds) {
      const r = calculate(id, examples[id]);
      expect(JSON.parse(JSON.stringify(r))).toEqual(r);
    }
  });

  it('two calls never share mutable step data', () => {
    const a = calculate('stack-flow', examples['stack-flow']);
    a.steps.find((s) => s.key === 'velocity_fps')?.dependsOn.push('tampered');
    const b = calculate('stack-flow', examples['stack-flow']);
    expect(b.steps.find((s) => s.key === 'velocity_fps')?.dependsOn).not.toContain('tampered');
  });
});
