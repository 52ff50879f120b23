import { describe, expect, it } from 'vitest';
import { drillIds, drillTemplates, getDrillTemplate, isDrillId } from '../../../server/engine/drills';

// The ids the lessons refer to (the brief's list), by area.
const idsByArea = {
  'flow-moisture': ['traverse-layout', 'moisture-train', 'velocity-flow', 'gas-molecular-weight'],
  particulate: ['isokinetic-check', 'particulate-loading', 'whole-run-reduction'],
  'gas-analysis': ['calibration-error', 'bias-and-drift', 'bias-corrected-average'],
  'emission-rates': ['ppm-to-mass-rate', 'f-factor-rate', 'diluent-correction'],
  'monitor-audits': ['rata-relative-accuracy', 'rata-bias-adjustment', 'rata-paired-differences'],
  'ambient-conversions': ['ppb-to-number-density', 'ppm-to-mg-per-m3', 'oxidation-lifetime'],
} as const;

describe('drill registry', () => {
  it('holds exactly the agreed ids, each in its area, at least three per area', () => {
    const expectedIds = Object.values(idsByArea).flat();
    expect([...drillTemplates.map((t) => t.id)].sort()).toEqual([...expectedIds].sort());
    expect([...drillIds].sort()).toEqual([...expectedIds].sort());
    for (const [area, ids] of Object.entries(idsByArea)) {
      expect(ids.length).toBeGreaterThanOrEqual(3);
      for (const id of ids) expect(getDrillTemplate(id)?.area).toBe(area);
    }
  });

  it('finds templates by id and nothing else', () => {
    for (const template of drillTemplates) {
      expect(getDrillTemplate(template.id)).toBe(template);
      expect(isDrillId(template.id)).toBe(true);
    }
    expect(getDrillTemplate('no-such-drill')).toBeUndefined();
    expect(getDrillTemplate('__proto__')).toBeUndefined();
    expect(isDrillId(42)).toBe(false);
  });

  it.each(drillTemplates.map((t) => [t.id, t] as const))('%s: fields are complete and depend only on earlier fields', (_id, template) => {
    expect(template.title.length).toBeGreaterThan(0);
    expect(template.summary.length).toBeGreaterThan(0);
    expect(template.methods.length).toBeGreaterThan(0);
    expect(template.fields.length).toBeGreaterThanOrEqual(1);
    const seen = new Set<string>();
    for (const field of template.fields) {
      expect(field.key).toMatch(/^[A-Za-z][A-Za-z0-9_]*$/);
      expect(field.label.length).toBeGreaterThan(0);
      expect(typeof field.unit).toBe('string');
      expect(field.source.length).toBeGreaterThan(0);
      expect(seen.has(field.key)).toBe(false);
      for (const dep of field.dependsOn ?? []) expect(seen.has(dep)).toBe(true);
      // a field can be recomputed from earlier answers exactly when it depends on some
      expect(typeof field.recompute === 'function').toBe((field.dependsOn ?? []).length > 0);
      seen.add(field.key);
    }
  });

  it('gives the flagship every step of a whole run, chained for carried-forward credit', () => {
    const flagship = getDrillTemplate('whole-run-reduction');
    expect(flagship).toBeDefined();
    const keys = flagship!.fields.map((f) => f.key);
    for (const key of [
      'meterVolumeStd_dscf',
      'moistureFraction',
      'dryMolecularWeight',
      'wetMolecularWeight',
      'velocity_fps',
      'dryStdFlow_dscfh',
      'isokinetic_pct',
      'concentration_grPerDscf',
      'emissionRate_lbPerHr',
    ]) {
      expect(keys).toContain(key);
    }
    const dependsOn = (key: string) => flagship!.fields.find((f) => f.key === key)?.dependsOn ?? [];
    expect(dependsOn('wetMolecularWeight')).toEqual(expect.arrayContaining(['moistureFraction', 'dryMolecularWeight']));
    expect(dependsOn('velocity_fps')).toContain('wetMolecularWeight');
    expect(dependsOn('dryStdFlow_dscfh')).toEqual(expect.arrayContaining(['velocity_fps', 'moistureFraction']));
    expect(dependsOn('isokinetic_pct')).toEqual(expect.arrayContaining(['velocity_fps', 'moistureFraction', 'meterVolumeStd_dscf']));
    expect(dependsOn('emissionRate_lbPerHr')).toEqual(expect.arrayContaining(['concentration_grPerDscf', 'dryStdFlow_dscfh']));
  });
});
