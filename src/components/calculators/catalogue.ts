/**
 * How the calculator index groups the calculations, and the one result each calculation is best
 * known by. Everything else about a calculation (title, inputs, units) comes from the API listing.
 */

export interface CalculatorArea {
  /** The competency area id used by lessons and certificates (content/areas.json). */
  id: string;
  name: string;
  methods: string;
  icon: string;
  blurb: string;
  calculations: string[];
}

export const CALCULATOR_AREAS: CalculatorArea[] = [
  {
    id: 'flow-moisture',
    name: 'Flow and moisture',
    methods: 'Methods 1–4',
    icon: 'pi pi-arrows-h',
    blurb: 'Lay out the traverse, find the gas makeup and water content, then the velocity and flow.',
    calculations: ['traverse-points', 'gas-composition', 'moisture', 'stack-flow'],
  },
  {
    id: 'particulate',
    name: 'Particulate sampling',
    methods: 'Method 5',
    icon: 'pi pi-filter',
    blurb: 'Check the sampling rate against the stack, then turn the catch into a loading and a rate.',
    calculations: ['isokinetic', 'particulate'],
  },
  {
    id: 'gas-analysis',
    name: 'Instrumental gas analysis',
    methods: 'Methods 3A, 6C, 7E, 10',
    icon: 'pi pi-sliders-h',
    blurb: 'The QA checks that decide whether an analyzer run stands.',
    calculations: ['analyzer-checks'],
  },
  {
    id: 'monitor-audits',
    name: 'Monitor audits',
    methods: 'PS-2 · Part 75 App. A',
    icon: 'pi pi-check-square',
    blurb: 'Judging an installed monitor against your reference runs.',
    calculations: ['relative-accuracy'],
  },
  {
    id: 'emission-rates',
    name: 'Emission rates',
    methods: 'Method 19 · Part 75 App. F',
    icon: 'pi pi-chart-line',
    blurb: 'From concentration to lb/hr, lb/MMBtu and tons a year, and corrections to a reference O2.',
    calculations: ['mass-emission-rate', 'f-factor-rate', 'diluent-correction'],
  },
  {
    id: 'ambient-conversions',
    name: 'Ambient conversions',
    methods: 'Ideal gas, CODATA 2018',
    icon: 'pi pi-cloud',
    blurb: 'ppm, ppb, mg/m³ and molecules per cm³ at stated conditions, and lifetimes against oxidants.',
    calculations: ['concentration-conversion', 'number-density', 'chemical-lifetime'],
  },
];

/** The result a crew looks for first, shown in saved runs and on the index. */
export const HEADLINE_RESULT: Record<string, string[]> = {
  'traverse-points': ['points'],
  'gas-composition': ['dryMolecularWeight'],
  moisture: ['moistureFractionToUse', 'moistureFraction'],
  'stack-flow': ['dryStdFlow_dscfh'],
  isokinetic: ['isokinetic_pct'],
  particulate: ['concentration_grPerDscf'],
  'mass-emission-rate': ['emissionRate_lbPerHr'],
  'f-factor-rate': ['emissionRate_lbPerMMBtu'],
  'diluent-correction': ['correctedConcentration'],
  'concentration-conversion': ['mgPerM3'],
  'number-density': ['numberDensity_perCm3'],
  'chemical-lifetime': ['lifetime_days'],
  'analyzer-checks': ['biasCorrectedAverage'],
  'relative-accuracy': ['relativeAccuracy_pct'],
};

/** "Moisture content (Method 4)" → { name: "Moisture content", method: "Method 4" }. */
export function splitTitle(title: string): { name: string; method: string | null } {
  const match = /^(.*?)\s*\(([^()]+)\)\s*$/.exec(title);
  return match ? { name: match[1], method: match[2] } : { name: title, method: null };
}
