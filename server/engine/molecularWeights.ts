/** Molecular weights from IUPAC standard atomic weights (abridged conventional values, IUPAC CIAAW 2021). */
import type { GasPollutant } from '../../shared/calculations/choices';

const ATOMIC_WEIGHT = {
  H: 1.008,
  C: 12.011,
  N: 14.007,
  O: 15.999,
  F: 18.998,
  S: 32.06,
  Cl: 35.45,
} as const;
type Element = keyof typeof ATOMIC_WEIGHT;

/** NOx is reported as NO2 (Method 7E and Part 75 convention). */
const FORMULA: Record<GasPollutant, Partial<Record<Element, number>>> = {
  SO2: { S: 1, O: 2 },
  NO: { N: 1, O: 1 },
  NO2: { N: 1, O: 2 },
  NOx: { N: 1, O: 2 },
  CO: { C: 1, O: 1 },
  CO2: { C: 1, O: 2 },
  O3: { O: 3 },
  NH3: { N: 1, H: 3 },
  H2S: { H: 2, S: 1 },
  HCl: { H: 1, Cl: 1 },
  HF: { H: 1, F: 1 },
  CH4: { C: 1, H: 4 },
  C3H8: { C: 3, H: 8 },
  HCHO: { C: 1, H: 2, O: 1 },
};

function formulaWeight(formula: Partial<Record<Element, number>>): number {
  let sum = 0;
  for (const [element, count] of Object.entries(formula) as [Element, number][]) sum += ATOMIC_WEIGHT[element] * count;
  return sum;
}

export const MOLECULAR_WEIGHT: Readonly<Record<GasPollutant, number>> = Object.fromEntries(
  (Object.keys(FORMULA) as GasPollutant[]).map((gas) => [gas, formulaWeight(FORMULA[gas])]),
) as Record<GasPollutant, number>;

export function formulaLatex(gas: GasPollutant): string {
  return (Object.entries(FORMULA[gas]) as [Element, number][])
    .map(([element, count]) => (count === 1 ? String(ATOMIC_WEIGHT[element]) : `${count}(${ATOMIC_WEIGHT[element]})`))
    .join(' + ');
}
