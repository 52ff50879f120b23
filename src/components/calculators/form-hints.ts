/**
 * The few rules a generated form needs that JSON Schema cannot carry: the server's schemas state
 * "give exactly one of these" and "only with that" in cross-field checks, which JSON Schema leaves
 * out. The form still comes from the listing; these hints only decide which of its fields are in
 * play. The server's 400 stays the final word on every rule.
 */

export interface AlternativeOption {
  id: string;
  label: string;
  /** Top-level inputs that belong to this choice; they are sent (and needed) only while it is picked. */
  fields: string[];
}

export interface AlternativeGroup {
  id: string;
  legend: string;
  hint?: string;
  options: AlternativeOption[];
}

export interface ShowWhen {
  /** Shown only while this choice field holds one of `equals`. */
  field?: string;
  equals?: string[];
  /** Shown only while this other field is in play. */
  activeField?: string;
}

export interface FormHints {
  alternatives?: AlternativeGroup[];
  showWhen?: Record<string, ShowWhen>;
}

const customOnly: ShowWhen = { field: 'pollutant', equals: ['custom'] };

export const FORM_HINTS: Record<string, FormHints> = {
  moisture: {
    alternatives: [
      {
        id: 'saturation',
        legend: 'Saturation check',
        hint: 'Method 4 uses the lower of the measured moisture and the moisture at saturation.',
        options: [
          { id: 'check', label: 'Check at stack conditions', fields: ['stackTemp_F', 'absoluteStackPressure_inHg'] },
          { id: 'skip', label: 'Leave it out', fields: [] },
        ],
      },
    ],
  },
  'stack-flow': {
    alternatives: [
      {
        id: 'size',
        legend: 'Stack size',
        options: [
          { id: 'diameter', label: 'Inside diameter', fields: ['stackDiameter_in'] },
          { id: 'area', label: 'Cross-sectional area', fields: ['stackArea_ft2'] },
        ],
      },
    ],
  },
  'mass-emission-rate': { showWhen: { molecularWeight: customOnly } },
  'f-factor-rate': {
    alternatives: [
      {
        id: 'concentration',
        legend: 'Concentration given as',
        options: [
          { id: 'ppm', label: 'ppmvd of a pollutant', fields: ['concentration_ppmvd', 'pollutant', 'molecularWeight'] },
          { id: 'mass', label: 'lb/dscf', fields: ['concentration_lbPerDscf'] },
        ],
      },
      {
        id: 'diluent',
        legend: 'Diluent measured',
        options: [
          { id: 'o2', label: 'O2 (uses Fd)', fields: ['o2Dry_pct'] },
          { id: 'co2', label: 'CO2 (uses Fc)', fields: ['co2Dry_pct'] },
        ],
      },
      {
        id: 'factor',
        legend: 'F factor',
        options: [
          { id: 'fuel', label: 'From the fuel table', fields: ['fuel'] },
          { id: 'own', label: 'Enter the factor', fields: ['fdFactor_dscfPerMMBtu', 'fcFactor_scfPerMMBtu'] },
        ],
      },
    ],
    showWhen: {
      molecularWeight: customOnly,
      fdFactor_dscfPerMMBtu: { activeField: 'o2Dry_pct' },
      fcFactor_scfPerMMBtu: { activeField: 'co2Dry_pct' },
    },
  },
  'concentration-conversion': {
    alternatives: [
      {
        id: 'gas',
        legend: 'Gas',
        options: [
          { id: 'listed', label: 'Pick from the list', fields: ['pollutant'] },
          { id: 'weight', label: 'Enter its molecular weight', fields: ['molecularWeight'] },
        ],
      },
    ],
  },
  'number-density': {
    alternatives: [
      {
        id: 'start',
        legend: 'Start from',
        options: [
          { id: 'ratio', label: 'A mixing ratio', fields: ['mixingRatio', 'mixingRatioUnit'] },
          { id: 'density', label: 'A number density', fields: ['numberDensity_perCm3'] },
        ],
      },
    ],
  },
  'chemical-lifetime': {
    alternatives: [
      {
        id: 'oxidant',
        legend: 'Oxidant level given as',
        options: [
          { id: 'density', label: 'Number density', fields: ['oxidantNumberDensity_perCm3'] },
          {
            id: 'ratio',
            label: 'Mixing ratio at a temperature and pressure',
            fields: ['oxidantMixingRatio', 'oxidantMixingRatioUnit', 'temperature_K', 'pressure_hPa'],
          },
        ],
      },
    ],
  },
};
