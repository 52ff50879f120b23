import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, BrowserContext, Page, Response } from 'playwright-core';
import { DESKTOP, PHONE, expectAccessible, launchBrowser, openPage, screenshot } from '../helpers/browser';
import { startTestServer, type RunningTestServer } from '../helpers/server';
import { createCompany, createUser } from '../helpers/factory';
import { signedIn, type TestAgent } from '../helpers/agent';

/**
 * Journey: a crew member reduces one particulate run through the chained field calculators
 * (moisture → stack flow → isokinetic → particulate), and what the screen shows is what the API
 * computes for the same inputs. Field values are an invented run, not check values.
 */

const WAIT = { timeout: 20_000 };

interface Listing {
  id: string;
  inputs: Record<string, { label: string }>;
}
interface CalcJson {
  results: Record<string, unknown>;
  steps: { key: string; value: number | boolean }[];
  warnings: string[];
}

let server: RunningTestServer;
let browser: Browser;
let closeBrowser: () => Promise<void>;
let crew: { email: string; password: string; name: string };
let agent: TestAgent;
let listing: Listing[];

beforeAll(async () => {
  server = await startTestServer();
  ({ browser, close: closeBrowser } = await launchBrowser());
  const company = await createCompany(server.knex, 'Larchmere Emission Testing');
  crew = await createUser(server.knex, { companyId: company.id, roles: ['crew'], name: 'Rowan Feldspar' });
  agent = await signedIn(server.app, crew.email, crew.password);
  listing = (await agent.get('/api/calculations').expect(200)).body.calculations;
});
afterAll(async () => {
  await closeBrowser?.();
  await server?.close();
});

async function signIn(page: Page) {
  await page.goto(`${server.url}/sign-in`);
  await page.getByLabel('E-mail address').fill(crew.email);
  await page.getByLabel('Password', { exact: true }).fill(crew.password);
  await page.getByTestId('sign-in-submit').click();
  await page.getByTestId('dashboard-crew').waitFor(WAIT);
}

/** The form field for one input, found by the label the API listing gives it. */
function field(page: Page, calculationId: string, input: string) {
  const label = listing.find((c) => c.id === calculationId)!.inputs[input].label;
  return page.getByLabel(label, { exact: true });
}

async function fillFields(page: Page, calculationId: string, values: Record<string, string>) {
  for (const [input, value] of Object.entries(values)) await field(page, calculationId, input).fill(value);
}

const SUPERSCRIPT: Record<string, string> = { '⁻': '-', '⁰': '0', '¹': '1', '²': '2', '³': '3', '⁴': '4', '⁵': '5', '⁶': '6', '⁷': '7', '⁸': '8', '⁹': '9' };

/** "1,360,825", "0.1411", "−0.62", "3.409 × 10⁻⁴" → a number. */
function readDisplayed(text: string): number {
  const match = /^(-?[\d.]+)(?: × 10([⁻⁰¹²³⁴⁵⁶⁷⁸⁹]+))?$/.exec(text.trim().replace(/,/g, '').replace(/−/g, '-'));
  if (!match) throw new Error(`not a displayed number: "${text}"`);
  const exponent = match[2] ? Number([...match[2]].map((c) => SUPERSCRIPT[c]).join('')) : 0;
  return Number(match[1]) * 10 ** exponent;
}

/** Shown to four significant figures (or to the unit from 1,000 up), so within half a unit of the fourth digit. */
function expectRoundedFrom(shown: string, exact: number, what: string) {
  const value = readDisplayed(shown);
  expect(Math.abs(value - exact), `${what}: "${shown}" is ${exact} rounded for display`).toBeLessThanOrEqual(Math.abs(exact) * 5.01e-4 + 1e-300);
}

/** Every numeric and yes/no result, and every worked step, on screen matches the API's JSON. */
async function expectScreenMatches(page: Page, json: CalcJson) {
  const panel = page.getByTestId('results');
  await panel.waitFor(WAIT);
  let compared = 0;
  for (const [key, value] of Object.entries(json.results)) {
    const row = panel.getByTestId(`result-${key}`);
    if (typeof value === 'number') {
      const cell = row.locator('[data-value]');
      expect(await cell.getAttribute('data-value'), `${key} keeps full precision for hover and copy`).toBe(String(value));
      expect(await cell.getAttribute('title')).toBe(String(value));
      expectRoundedFrom((await cell.textContent())!, value, key);
      compared += 1;
    } else if (typeof value === 'boolean') {
      expect((await row.locator('td').first().textContent())!.trim()).toBe(value ? 'Yes' : 'No');
      compared += 1;
    }
  }
  for (const step of json.steps) {
    const cell = panel.locator(`[data-step="${step.key}"] [data-value]`);
    if (typeof step.value === 'number') {
      expect(await cell.getAttribute('data-value'), `step ${step.key}`).toBe(String(step.value));
      expectRoundedFrom((await cell.textContent())!, step.value, `step ${step.key}`);
    } else {
      expect((await cell.textContent())!.trim()).toBe(step.value ? 'Yes' : 'No');
    }
  }
  expect(await panel.locator('.katex').count(), 'every step has its equation typeset').toBe(json.steps.length);
  expect(compared).toBeGreaterThan(0);
}

/** Clicks Calculate and returns what the browser sent and what the API answered. */
async function calculate(page: Page, calculationId: string): Promise<{ sent: Record<string, unknown>; status: number; json: CalcJson }> {
  const answered = page.waitForResponse(
    (r: Response) => r.url().endsWith(`/api/calculations/${calculationId}`) && r.request().method() === 'POST',
    WAIT,
  );
  await page.getByTestId('calculate').click();
  const response = await answered;
  return { sent: response.request().postDataJSON().inputs, status: response.status(), json: await response.json() };
}

/** The same inputs through the API directly, as this crew member: the numbers must be identical. */
async function expectApiAgrees(calculationId: string, sent: Record<string, unknown>, json: CalcJson) {
  const direct = await agent.post(`/api/calculations/${calculationId}`, { inputs: sent });
  expect(direct.status).toBe(200);
  expect(json.results).toEqual(direct.body.results);
  expect(json.steps).toEqual(direct.body.steps);
}

/** Puts text on the clipboard and pastes it into a field, as a person copying a spreadsheet column would. */
async function paste(page: Page, context: BrowserContext, target: ReturnType<Page['getByLabel']>, text: string) {
  await context.grantPermissions(['clipboard-read', 'clipboard-write'], { origin: server.url });
  await page.evaluate((value) => navigator.clipboard.writeText(value), text);
  await target.focus();
  await page.keyboard.press('ControlOrMeta+A');
  await page.keyboard.press('ControlOrMeta+V');
}

const moistureTyped = {
  condensateGain_ml: '112.5',
  silicaGelGain_g: '9.8',
  meterVolume_ft3: '36.42',
  meterFactorY: '1.998', // a slip of the finger; corrected below
  barometric_inHg: '29.62',
  orificePressure_inH2O: '1.45',
  meterTemp_F: '84',
  stackTemp_F: '285',
  absoluteStackPressure_inHg: '29.5',
};
const deltaP = [0.42, 0.51, 0.58, 0.62, 0.6, 0.55, 0.44, 0.52, 0.59, 0.63, 0.61, 0.53];

describe('journey: a crew member reduces a run through the chained calculators', () => {
  // Four calculators, each checked against the API, on a shared and often busy machine: allow time.
  it('moisture → stack flow → isokinetic → particulate, with the API’s numbers on screen at every step', { timeout: 300_000 }, async () => {
    const { page, context, problems } = await openPage(browser, DESKTOP);
    await signIn(page);

    // The index groups the calculations by competency area, with the caution and the saved runs.
    await page.goto(`${server.url}/calculators`);
    await page.getByTestId('calculator-card-moisture').waitFor(WAIT);
    expect(await page.locator('[data-testid^="calculator-card-"]').count()).toBe(listing.length);
    for (const area of ['flow-moisture', 'particulate', 'gas-analysis', 'monitor-audits', 'emission-rates', 'ambient-conversions']) {
      expect(await page.locator(`[data-area="${area}"]`).count(), area).toBe(1);
    }
    expect(await page.getByTestId('safety-caution').textContent()).toMatch(/heights, hot surfaces.*oxygen-deficient/);
    await page.getByText('No saved runs yet').waitFor(WAIT);
    await expectAccessible(page, 'calculator index');
    await screenshot(page, 'calculators-index-desktop');

    // 1. Moisture. A bad value: the server's message beside the field, and nothing typed is lost.
    await page.getByTestId('calculator-card-moisture').getByRole('link').click();
    await page.getByTestId('calculate').waitFor(WAIT);
    // The caution can paint a frame after the form's button; give it the same wait before checking.
    await page.getByTestId('safety-caution').waitFor({ ...WAIT, state: 'visible' }).catch(() => undefined);
    expect(await page.getByTestId('safety-caution').isVisible()).toBe(true);
    await fillFields(page, 'moisture', moistureTyped);
    const refused = await calculate(page, 'moisture');
    expect(refused.status).toBe(400);
    const serverProblem = (refused.json as unknown as { error: { fields: { field: string; message: string }[] } }).error.fields.find(
      (f) => f.field === 'inputs.meterFactorY',
    );
    expect(serverProblem, 'the server names the bad field').toBeDefined();
    const beside = page.getByTestId('error-meterFactorY');
    await beside.waitFor(WAIT);
    const predicate = serverProblem!.message.replace(/^meterFactorY /, '');
    expect((await beside.textContent())!.trim().toLowerCase()).toBe(predicate.toLowerCase());
    expect(await page.getByTestId('problem-summary').textContent()).toContain(serverProblem!.message);
    for (const [input, value] of Object.entries(moistureTyped)) {
      expect(await field(page, 'moisture', input).inputValue(), `${input} kept as typed`).toBe(value);
    }
    await screenshot(page, 'calculators-moisture-refused-desktop');

    await field(page, 'moisture', 'meterFactorY').fill('0.998');
    const moisture = await calculate(page, 'moisture');
    expect(moisture.status).toBe(200);
    expect(moisture.sent).toEqual({
      condensateGain_ml: 112.5,
      silicaGelGain_g: 9.8,
      meterVolume_ft3: 36.42,
      meterFactorY: 0.998,
      barometric_inHg: 29.62,
      orificePressure_inH2O: 1.45,
      meterTemp_F: 84,
      stackTemp_F: 285,
      absoluteStackPressure_inHg: 29.5,
    });
    await expectScreenMatches(page, moisture.json);
    await expectApiAgrees('moisture', moisture.sent, moisture.json);
    expect(await page.getByTestId('results-disclaimer').textContent()).toMatch(/do not replace the method text, agency\s+requirements, accreditation or licensed professional judgement/);

    // Copy puts the full-precision results on the clipboard as tab-separated text.
    await context.grantPermissions(['clipboard-read', 'clipboard-write'], { origin: server.url });
    await page.getByTestId('copy-results').click();
    const copied = await page.evaluate(() => navigator.clipboard.readText());
    expect(copied).toContain(`\t${moisture.json.results.moistureFraction}\t`);
    await screenshot(page, 'calculators-moisture-results-desktop');

    // 2. Stack flow, opened from the moisture result: Bws (and the inputs they share) carried over.
    await page.getByTestId('use-in-stack-flow').click();
    await page.getByTestId('calculator-title').filter({ hasText: 'Stack gas velocity' }).waitFor(WAIT);
    expect(await field(page, 'stack-flow', 'moistureFraction').inputValue()).toBe(String(moisture.json.results.moistureFractionToUse));
    expect(await page.getByTestId('carried-moistureFraction').textContent()).toMatch(/from Moisture content/);
    expect(await field(page, 'stack-flow', 'barometric_inHg').inputValue()).toBe('29.62');
    expect(await field(page, 'stack-flow', 'stackTemp_F').inputValue()).toBe('285');

    // A column pasted from a spreadsheet, with one reading mistyped (letter O for zero).
    const withTypo = deltaP.map((v, i) => (i === 1 ? 'O.51' : String(v)));
    await paste(page, context, field(page, 'stack-flow', 'deltaP_inH2O'), `${withTypo.join('\r\n')}\r\n`);
    expect(await page.getByTestId('count-deltaP_inH2O').textContent()).toMatch(/11 values read[\s\S]*Entry 2, “O\.51”, is not a number/);
    await fillFields(page, 'stack-flow', { staticPressure_inH2O: '-0.62', dryMolecularWeight: '30.2', stackDiameter_in: '48' });
    const flowRefused = await calculate(page, 'stack-flow');
    expect(flowRefused.status).toBe(400);
    const listProblem = (flowRefused.json as unknown as { error: { fields: { field: string; message: string }[] } }).error.fields.find(
      (f) => f.field === 'inputs.deltaP_inH2O.1',
    );
    expect(listProblem).toBeDefined();
    await page.getByTestId('error-deltaP_inH2O').waitFor(WAIT);
    expect((await page.getByTestId('error-deltaP_inH2O').textContent())!.trim()).toBe(
      `Entry 2 ${listProblem!.message.replace(/^deltaP_inH2O\.1 /, '')}`,
    );
    expect(await field(page, 'stack-flow', 'deltaP_inH2O').inputValue()).toContain('O.51');
    expect(await field(page, 'stack-flow', 'dryMolecularWeight').inputValue()).toBe('30.2');

    await paste(page, context, field(page, 'stack-flow', 'deltaP_inH2O'), deltaP.join('\n'));
    expect(await page.getByTestId('count-deltaP_inH2O').textContent()).toMatch(/12 values read/);
    const flow = await calculate(page, 'stack-flow');
    expect(flow.status).toBe(200);
    expect(flow.sent).toEqual({
      deltaP_inH2O: deltaP,
      stackTemp_F: 285,
      barometric_inHg: 29.62,
      staticPressure_inH2O: -0.62,
      pitotCoefficient: 0.84,
      dryMolecularWeight: 30.2,
      moistureFraction: moisture.json.results.moistureFractionToUse,
      stackDiameter_in: 48,
    });
    await expectScreenMatches(page, flow.json);
    await expectApiAgrees('stack-flow', flow.sent, flow.json);
    await screenshot(page, 'calculators-stack-flow-results-desktop');

    // 3. Isokinetic: velocity and pressure from stack flow, Vm(std) from moisture, nothing retyped.
    await page.getByTestId('use-in-isokinetic').click();
    await page.getByTestId('calculator-title').filter({ hasText: 'Isokinetic' }).waitFor(WAIT);
    expect(await field(page, 'isokinetic', 'velocity_fps').inputValue()).toBe(String(flow.json.results.velocity_fps));
    expect(await field(page, 'isokinetic', 'absoluteStackPressure_inHg').inputValue()).toBe(String(flow.json.results.absoluteStackPressure_inHg));
    expect(await page.getByTestId('carried-velocity_fps').textContent()).toMatch(/from Stack gas velocity/);
    expect(await page.getByTestId('carried-meterVolumeStd_dscf').textContent()).toMatch(/from Moisture content/);
    await fillFields(page, 'isokinetic', { nozzleDiameter_in: '0.25', sampleTime_min: '60' });
    const iso = await calculate(page, 'isokinetic');
    expect(iso.status).toBe(200);
    expect(iso.sent).toEqual({
      stackTemp_F: 285,
      meterVolumeStd_dscf: moisture.json.results.meterVolumeStd_dscf,
      absoluteStackPressure_inHg: flow.json.results.absoluteStackPressure_inHg,
      velocity_fps: flow.json.results.velocity_fps,
      nozzleDiameter_in: 0.25,
      sampleTime_min: 60,
      moistureFraction: moisture.json.results.moistureFractionToUse,
    });
    await expectScreenMatches(page, iso.json);
    await expectApiAgrees('isokinetic', iso.sent, iso.json);

    // 4. Particulate: Vm(std) and the dry standard flow carried; only the catch is typed.
    await page.getByTestId('use-in-particulate').click();
    await page.getByTestId('calculator-title').filter({ hasText: 'Particulate' }).waitFor(WAIT);
    await fillFields(page, 'particulate', { filterCatch_mg: '18.7' });
    const dust = await calculate(page, 'particulate');
    expect(dust.status).toBe(200);
    expect(dust.sent).toEqual({
      filterCatch_mg: 18.7,
      meterVolumeStd_dscf: moisture.json.results.meterVolumeStd_dscf,
      dryStdFlow_dscfh: flow.json.results.dryStdFlow_dscfh,
    });
    await expectScreenMatches(page, dust.json);
    await expectApiAgrees('particulate', dust.sent, dust.json);
    await expectAccessible(page, 'particulate calculator with results');
    await screenshot(page, 'calculators-particulate-results-desktop');

    expect(problems.filter((p) => !/status of 400/.test(p)), 'console errors or CSP violations').toEqual([]);
    await context.close();
  });

  it('saves a run with a name, lists it, reopens it as saved and deletes it', { timeout: 240_000 }, async () => {
    const { page, context, problems } = await openPage(browser, DESKTOP);
    await signIn(page);
    await page.goto(`${server.url}/calculators/particulate`);
    await page.getByTestId('calculate').waitFor(WAIT);
    await fillFields(page, 'particulate', { filterCatch_mg: '18.7', meterVolumeStd_dscf: '35.04', dryStdFlow_dscfh: '1360825' });
    const dust = await calculate(page, 'particulate');
    expect(dust.status).toBe(200);
    await expectScreenMatches(page, dust.json);

    await page.getByLabel('Name this run').fill('Kiln 2, run 1');
    await page.getByTestId('save-run').click();
    await page.getByTestId('saved-confirmation').waitFor(WAIT);
    await page.goto(`${server.url}/calculators#saved-runs`);
    const row = page.getByTestId('saved-runs').locator('tbody tr', { hasText: 'Kiln 2, run 1' });
    await row.waitFor(WAIT);
    expect(await row.textContent()).toMatch(/Particulate concentration/);
    await row.getByRole('link', { name: 'Reopen' }).click();
    await page.getByTestId('results-saved-run').waitFor(WAIT);
    expect(await field(page, 'particulate', 'filterCatch_mg').inputValue()).toBe('18.7');
    const reopened = page.getByTestId('result-concentration_grPerDscf').locator('[data-value]');
    expect(await reopened.getAttribute('data-value')).toBe(String(dust.json.results.concentration_grPerDscf));
    const again = page.waitForResponse((r) => r.url().endsWith('/api/calculations/particulate'), WAIT);
    await page.getByRole('button', { name: 'Calculate again for the worked steps' }).click();
    expect((await (await again).json()).results).toEqual(dust.json.results);
    await page.locator('[data-step]').first().waitFor(WAIT);
    await expectScreenMatches(page, dust.json);
    await page.goto(`${server.url}/calculators#saved-runs`);
    await row.waitFor(WAIT);
    await row.getByTestId('delete-run').click();
    await row.getByTestId('confirm-delete').click();
    await page.getByText('No saved runs yet').waitFor(WAIT);
    expect((await agent.get('/api/calculation-runs').expect(200)).body.total).toBe(0);

    expect(problems, 'console errors or CSP violations').toEqual([]);
    await context.close();
  });

  it('fits a 360 px phone: forms stack, tables scroll inside their box', { timeout: 240_000 }, async () => {
    const { page, context, problems } = await openPage(browser, PHONE);
    await signIn(page);
    await page.goto(`${server.url}/calculators`);
    await page.getByTestId('calculator-card-stack-flow').waitFor(WAIT);
    await screenshot(page, 'calculators-index-phone');

    await page.goto(`${server.url}/calculators/stack-flow`);
    await page.getByTestId('calculate').waitFor(WAIT);
    await fillFields(page, 'stack-flow', {
      deltaP_inH2O: deltaP.join('\t'),
      stackTemp_F: '285',
      barometric_inHg: '29.62',
      staticPressure_inH2O: '-0.62',
      dryMolecularWeight: '30.2',
      moistureFraction: '0.11',
      stackDiameter_in: '48',
    });
    const flow = await calculate(page, 'stack-flow');
    expect(flow.status).toBe(200);
    await expectScreenMatches(page, flow.json);
    const overflow = () => page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
    expect(await overflow(), 'no sideways scrolling of the whole page').toBeLessThanOrEqual(0);
    await screenshot(page, 'calculators-stack-flow-phone');
    await expectAccessible(page, 'stack flow calculator on a phone');

    // The saved-runs table is wider than a phone: it scrolls inside its own box, not the page.
    await page.getByTestId('save-run').click();
    await page.getByTestId('saved-confirmation').waitFor(WAIT);
    await page.goto(`${server.url}/calculators#saved-runs`);
    const row = page.getByTestId('saved-runs').locator('tbody tr').first();
    await row.waitFor(WAIT);
    expect(await overflow(), 'the index with a saved run does not scroll sideways').toBeLessThanOrEqual(0);
    const box = page.getByTestId('saved-runs').getByRole('region');
    expect(await box.evaluate((el) => el.scrollWidth > el.clientWidth), 'the table scrolls inside its box').toBe(true);
    await screenshot(page, 'calculators-saved-runs-phone');
    await row.getByTestId('delete-run').click();
    await row.getByTestId('confirm-delete').click();
    await page.getByText('No saved runs yet').waitFor(WAIT);
    expect(problems, 'console errors or CSP violations').toEqual([]);
    await context.close();
  });
});
