import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { createTestApp, type TestApp } from '../helpers/app';
import { TestAgent, signedIn } from '../helpers/agent';
import { createCompany, createUser } from '../helpers/factory';

let t: TestApp;
let crew: TestAgent;
let otherCrew: TestAgent;

const stackFlow = {
  deltaP_inH2O: [0.52, 0.61, 0.7, 0.44, 0.58, 0.66],
  stackTemp_F: 352,
  barometric_inHg: 29.62,
  staticPressure_inH2O: -0.45,
  dryMolecularWeight: 29.86,
  moistureFraction: 0.104,
  stackDiameter_in: 60,
};

beforeAll(async () => {
  t = await createTestApp();
  const company = await createCompany(t.knex, 'Sorrel Bank Emissions Testing');
  const a = await createUser(t.knex, { companyId: company.id, roles: ['crew'] });
  const b = await createUser(t.knex, { companyId: company.id, roles: ['crew'] });
  crew = await signedIn(t.app, a.email, a.password);
  otherCrew = await signedIn(t.app, b.email, b.password);
});
afterAll(() => t.close());

const fieldsOf = (res: request.Response) => (res.body.error?.fields ?? []).map((f: { field: string }) => f.field);

describe('POST /api/calculations/:id', () => {
  it('returns the result with worked steps that name their sources', async () => {
    const res = await crew.post('/api/calculations/stack-flow', { inputs: stackFlow });
    expect(res.status).toBe(200);
    expect(res.body.id).toBe('stack-flow');
    // Method 2, Eq. 2-9 worked by hand here: vs = 85.49 Cp mean(√Δp) √(Ts/(Ps Ms)).
    const meanSqrt = stackFlow.deltaP_inH2O.reduce((s, d) => s + Math.sqrt(d), 0) / stackFlow.deltaP_inH2O.length;
    const ps = stackFlow.barometric_inHg + stackFlow.staticPressure_inH2O / 13.6;
    const ms = stackFlow.dryMolecularWeight * (1 - stackFlow.moistureFraction) + 18.0 * stackFlow.moistureFraction;
    const vs = 85.49 * 0.84 * meanSqrt * Math.sqrt((stackFlow.stackTemp_F + 460) / (ps * ms));
    expect(res.body.results.velocity_fps).toBeCloseTo(vs, 6);
    for (const step of res.body.steps) {
      expect(typeof step.source === 'string' && step.source.length > 3, `${step.key} names a source`).toBe(true);
      expect(Array.isArray(step.dependsOn)).toBe(true);
    }
  });

  it.each([
    ['a string for a number', 'stack-flow', { ...stackFlow, stackTemp_F: 'hot' }, ['inputs.stackTemp_F']],
    ['Infinity (1e999 in JSON)', 'stack-flow', { ...stackFlow, barometric_inHg: '__INF__' }, ['inputs.barometric_inHg']],
    ['an empty reading list', 'stack-flow', { ...stackFlow, deltaP_inH2O: [] }, ['inputs.deltaP_inH2O']],
    ['a negative absolute pressure', 'isokinetic', { stackTemp_F: 300, meterVolumeStd_dscf: 40, absoluteStackPressure_inHg: -29, velocity_fps: 50, nozzleDiameter_in: 0.25, sampleTime_min: 60, moistureFraction: 0.1 }, ['inputs.absoluteStackPressure_inHg']],
    ['a moisture fraction of 1', 'gas-composition', { co2_pct: 12, o2_pct: 6, moistureFraction: 1 }, ['inputs.moistureFraction']],
    ['a reference O2 of 20.9', 'diluent-correction', { concentration: 50, measuredO2_pct: 8, referenceO2_pct: 20.9 }, ['inputs.referenceO2_pct']],
    ['mismatched RATA pairs', 'relative-accuracy', { referenceValues: [1, 2, 3, 4, 5, 6, 7, 8, 9], monitorValues: [1, 2, 3, 4, 5, 6, 7, 8] }, ['inputs.monitorValues']],
    ['an odd traverse point count', 'traverse-points', { stackDiameter_in: 60, pointsPerDiameter: 7 }, ['inputs.pointsPerDiameter']],
  ])('answers %s with a 400 naming the field', async (_label, id, inputs, expectedFields) => {
    const body = JSON.stringify({ inputs }).replace('"__INF__"', '1e999');
    const token = await crew.csrfToken();
    const res = await crew.agent.post(`/api/calculations/${id}`).set('x-csrf-token', token).set('content-type', 'application/json').send(body);
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('invalid_input');
    for (const field of expectedFields) expect(fieldsOf(res)).toContain(field);
    for (const f of res.body.error.fields) expect(f.message).toContain(f.field.replace(/^inputs\./, '').split('.')[0]);
  });

  it('answers a missing inputs object with a 400 naming it', async () => {
    const res = await crew.post('/api/calculations/stack-flow', {});
    expect(res.status).toBe(400);
    expect(fieldsOf(res)).toContain('inputs');
  });

  it('answers an unknown calculation with 404', async () => {
    expect((await crew.post('/api/calculations/no-such-method', { inputs: {} })).status).toBe(404);
  });

  it('refuses anonymous callers (401) and roles without calculators (403)', async () => {
    const anonymous = new TestAgent(t.app);
    expect((await anonymous.post('/api/calculations/stack-flow', { inputs: stackFlow })).status).toBe(401);
    const auditFirm = await createCompany(t.knex, 'Tansy Reach Assessors', 'auditing');
    const auditorUser = await createUser(t.knex, { companyId: auditFirm.id, roles: ['auditor'] });
    const auditor = await signedIn(t.app, auditorUser.email, auditorUser.password);
    expect((await auditor.post('/api/calculations/stack-flow', { inputs: stackFlow })).status).toBe(403);
  });
});

describe('listing and documentation', () => {
  it('lists every calculation with its input JSON Schema and output units', async () => {
    const res = await crew.get('/api/calculations').expect(200);
    expect(res.body.calculations).toHaveLength(14);
    const flow = res.body.calculations.find((c: { id: string }) => c.id === 'stack-flow');
    expect(flow.inputSchema.type).toBe('object');
    expect(Object.keys(flow.inputSchema.properties)).toEqual(expect.arrayContaining(['deltaP_inH2O', 'stackTemp_F', 'moistureFraction']));
    expect(flow.outputs.velocity_fps.unit).toBe('ft/s');
  });

  it('publishes an OpenAPI document generated from the schemas', async () => {
    const res = await request(t.app).get('/api/openapi.json').expect(200);
    expect(res.body.openapi).toMatch(/^3\./);
    const calcPaths = Object.keys(res.body.paths).filter((p) => p.startsWith('/api/calculations/'));
    expect(calcPaths).toHaveLength(14);
    const schema = res.body.paths['/api/calculations/moisture'].post.requestBody.content['application/json'].schema.properties.inputs;
    expect(schema.properties.condensateGain_ml).toBeDefined();
  });
});

describe('history', () => {
  it('saves a run on request, lists it, reopens it, and keeps it private to its owner', async () => {
    const saved = await crew.post('/api/calculations/stack-flow', { inputs: stackFlow, save: true, label: 'Unit 4 run 2' });
    expect(saved.status).toBe(200);
    const runId = saved.body.run.id;
    const list = await crew.get('/api/calculation-runs?calculationId=stack-flow').expect(200);
    expect(list.body.total).toBeGreaterThanOrEqual(1);
    expect(list.body.runs[0]).toMatchObject({ id: runId, calculationId: 'stack-flow', label: 'Unit 4 run 2', inputs: stackFlow });
    const one = await crew.get(`/api/calculation-runs/${runId}`).expect(200);
    expect(one.body.run.results.velocity_fps).toBeCloseTo(saved.body.results.velocity_fps, 10);
    expect((await otherCrew.get(`/api/calculation-runs/${runId}`)).status).toBe(404);
    expect((await otherCrew.send('delete', `/api/calculation-runs/${runId}`)).status).toBe(404);
    expect((await crew.send('delete', `/api/calculation-runs/${runId}`)).status).toBe(204);
    expect((await crew.get(`/api/calculation-runs/${runId}`)).status).toBe(404);
  });

  it('does not save a run that failed validation', async () => {
    const before = (await crew.get('/api/calculation-runs').expect(200)).body.total;
    expect((await crew.post('/api/calculations/stack-flow', { inputs: { ...stackFlow, moistureFraction: 1.2 }, save: true })).status).toBe(400);
    expect((await crew.get('/api/calculation-runs').expect(200)).body.total).toBe(before);
  });
});
