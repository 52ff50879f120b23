/** Method 3 (40 CFR Part 60, App. A-2): dry molecular weight from Orsat or analyzer CO2, O2, CO. */
import type { CalculationInputParsed } from '../../shared/calculations/schemas';
import { WET_MW_STEP, wetMolecularWeight } from './method2';
import type { StepSpec, Worksheet } from './worksheet';

/** Method 3, Md equation: 0.440 = 44/100 (CO2), 0.320 = 32/100 (O2), 0.280 = 28/100 (N2 and CO). */
const MD_CO2 = 0.44;
const MD_O2 = 0.32;
const MD_N2_CO = 0.28;

const N2_STEP: StepSpec = {
  key: 'n2_pct',
  label: 'Nitrogen (by difference), dry basis',
  equation: String.raw`\%N_2 = 100 - \%CO_2 - \%O_2 - \%CO`,
  unit: '%',
  source: 'Method 3, §12',
  inputs: ['co2_pct', 'o2_pct', 'co_pct'],
};
const MD_STEP: StepSpec = {
  key: 'dryMolecularWeight',
  label: 'Dry molecular weight, Md',
  equation: String.raw`M_d = 0.44\,\%CO_2 + 0.32\,\%O_2 + 0.28\,(\%N_2 + \%CO)`,
  unit: 'lb/lb-mol',
  source: 'Method 3, §12',
  dependsOn: ['n2_pct'],
  inputs: ['co2_pct', 'o2_pct', 'co_pct'],
};
const MS_STEP: StepSpec = { ...WET_MW_STEP, dependsOn: ['dryMolecularWeight'], inputs: ['moistureFraction'] };

export function gasComposition(input: CalculationInputParsed<'gas-composition'>, w: Worksheet) {
  const n2 = w.number(N2_STEP, 100 - input.co2_pct - input.o2_pct - input.co_pct);
  const md = w.number(MD_STEP, MD_CO2 * input.co2_pct + MD_O2 * input.o2_pct + MD_N2_CO * (n2 + input.co_pct));
  const results: Record<string, number> = { n2_pct: n2, dryMolecularWeight: md };
  if (input.moistureFraction !== undefined) {
    results.wetMolecularWeight = w.number(MS_STEP, wetMolecularWeight(md, input.moistureFraction));
  }
  return results;
}
