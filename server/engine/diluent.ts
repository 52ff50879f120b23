/** O2 diluent correction to a reference O2 (common practice; the form used throughout Part 60 subparts). */
import type { CalculationInputParsed } from '../../shared/calculations/schemas';
import { AMBIENT_O2_PCT } from './constants';
import type { StepSpec, Worksheet } from './worksheet';

const FACTOR_STEP: StepSpec = {
  key: 'o2CorrectionFactor',
  label: 'O2 correction factor',
  equation: String.raw`f = \frac{20.9 - \%O_{2,ref}}{20.9 - \%O_{2,meas}}`,
  unit: '',
  source: 'Common practice (Part 60 subparts, O2 correction)',
  inputs: ['measuredO2_pct', 'referenceO2_pct'],
};
const CORRECTED_STEP: StepSpec = {
  key: 'correctedConcentration',
  label: 'Concentration corrected to the reference O2',
  equation: String.raw`C_{ref} = C\,f`,
  unit: 'same as input',
  source: 'Common practice (Part 60 subparts, O2 correction)',
  dependsOn: ['o2CorrectionFactor'],
  inputs: ['concentration'],
};

export function diluentCorrection(input: CalculationInputParsed<'diluent-correction'>, w: Worksheet) {
  const factor = w.number(
    FACTOR_STEP,
    (AMBIENT_O2_PCT - input.referenceO2_pct) / (AMBIENT_O2_PCT - input.measuredO2_pct),
  );
  const corrected = w.number(CORRECTED_STEP, input.concentration * factor);
  return { o2CorrectionFactor: factor, correctedConcentration: corrected };
}
