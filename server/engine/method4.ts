/** Method 4 (40 CFR Part 60, App. A-3): moisture content of stack gases. */
import type { CalculationInputParsed } from '../../shared/calculations/schemas';
import { fahrenheitToCelsius, mmHgToInHg } from '../../shared/units';
import { IN_H2O_PER_IN_HG, RANKINE_OFFSET } from './constants';
import { fmt, type StepSpec, type Worksheet } from './worksheet';

/** Water vapor at standard conditions per ml of condensate, ft³/ml (Method 4, Eq. 4-1, K1). */
export const K1_FT3_PER_ML = 0.04706;
/** Water vapor at standard conditions per g of silica gel gain, ft³/g (Method 4, Eq. 4-2, K3). */
export const K3_FT3_PER_G = 0.04715;
/** Tstd/Pstd = 528/29.92, °R/in. Hg (Method 4, Eq. 4-3, K4; the same 17.64 as Method 5, Eq. 5-1). */
export const K4_R_PER_IN_HG = 17.64;

/**
 * Antoine constants for water, log10(p / mm Hg) = A − B/(C + t / °C). The common pair of sets
 * (from memory, check against a chemistry handbook, e.g. Lange's Handbook of Chemistry):
 * 1–100 °C: A = 8.07131, B = 1730.63, C = 233.426; 99–374 °C: A = 8.14019, B = 1810.94, C = 244.485.
 */
const ANTOINE_WATER_LOW = { A: 8.07131, B: 1730.63, C: 233.426 } as const;
const ANTOINE_WATER_HIGH = { A: 8.14019, B: 1810.94, C: 244.485 } as const;
const ANTOINE_SWITCH_C = 100;

/** Saturation vapor pressure of water, mm Hg, by the Antoine equation. */
export function waterVaporPressure_mmHg(temperature_C: number): number {
  const k = temperature_C <= ANTOINE_SWITCH_C ? ANTOINE_WATER_LOW : ANTOINE_WATER_HIGH;
  return 10 ** (k.A - k.B / (k.C + temperature_C));
}

const VWC_STEP: StepSpec = {
  key: 'condensateVaporStd_scf',
  label: 'Water vapor condensed in the impingers, at standard conditions, Vwc(std)',
  equation: String.raw`V_{wc(std)} = 0.04706\,V_{lc}`,
  unit: 'scf',
  source: 'Method 4, Eq. 4-1',
  inputs: ['condensateGain_ml'],
};
const VWSG_STEP: StepSpec = {
  key: 'silicaGelVaporStd_scf',
  label: 'Water vapor collected in the silica gel, at standard conditions, Vwsg(std)',
  equation: String.raw`V_{wsg(std)} = 0.04715\,W_{sg}`,
  unit: 'scf',
  source: 'Method 4, Eq. 4-2',
  inputs: ['silicaGelGain_g'],
};
const VW_STEP: StepSpec = {
  key: 'waterVaporStd_scf',
  label: 'Total water vapor at standard conditions',
  equation: String.raw`V_{w(std)} = V_{wc(std)} + V_{wsg(std)}`,
  unit: 'scf',
  source: 'Method 4, Eq. 4-4',
  dependsOn: ['condensateVaporStd_scf', 'silicaGelVaporStd_scf'],
};
const VM_STD_STEP: StepSpec = {
  key: 'meterVolumeStd_dscf',
  label: 'Dry gas volume metered, at standard conditions, Vm(std)',
  equation: String.raw`V_{m(std)} = 17.64\,Y\,V_m\,\frac{P_{bar} + \Delta H/13.6}{t_m + 460}`,
  unit: 'dscf',
  source: 'Method 4, Eq. 4-3',
  inputs: ['meterVolume_ft3', 'meterFactorY', 'barometric_inHg', 'orificePressure_inH2O', 'meterTemp_F'],
};
const BWS_STEP: StepSpec = {
  key: 'moistureFraction',
  label: 'Moisture fraction, Bws',
  equation: String.raw`B_{ws} = \frac{V_{w(std)}}{V_{w(std)} + V_{m(std)}}`,
  unit: '',
  source: 'Method 4, Eq. 4-4',
  dependsOn: ['waterVaporStd_scf', 'meterVolumeStd_dscf'],
};
const PV_STEP: StepSpec = {
  key: 'waterVaporPressure_inHg',
  label: 'Saturation vapor pressure of water at stack temperature',
  equation: String.raw`p_v = \frac{10^{\,A - B/(C + t_{s,\degree C})}}{25.4}`,
  unit: 'in. Hg',
  source: 'Antoine equation for water (handbook constants)',
  inputs: ['stackTemp_F'],
};
const SATURATION_STEP: StepSpec = {
  key: 'saturationMoistureFraction',
  label: 'Moisture fraction at saturation',
  equation: String.raw`B_{ws(sat)} = \min\!\left(\frac{p_v}{P_s},\ 1\right)`,
  unit: '',
  source: 'Method 4, §12 (saturation check)',
  dependsOn: ['waterVaporPressure_inHg'],
  inputs: ['absoluteStackPressure_inHg'],
};
const BWS_USE_STEP: StepSpec = {
  key: 'moistureFractionToUse',
  label: 'Moisture fraction to use (the lower of measured and saturation)',
  equation: String.raw`B_{ws} = \min\!\left(B_{ws(meas)},\ B_{ws(sat)}\right)`,
  unit: '',
  source: 'Method 4, §12 (saturation check)',
  dependsOn: ['moistureFraction', 'saturationMoistureFraction'],
};

export function moisture(input: CalculationInputParsed<'moisture'>, w: Worksheet) {
  const vwc = w.number(VWC_STEP, K1_FT3_PER_ML * input.condensateGain_ml);
  const vwsg = w.number(VWSG_STEP, K3_FT3_PER_G * input.silicaGelGain_g);
  const vw = w.number(VW_STEP, vwc + vwsg);
  const vmStd = w.number(
    VM_STD_STEP,
    (K4_R_PER_IN_HG *
      input.meterFactorY *
      input.meterVolume_ft3 *
      (input.barometric_inHg + input.orificePressure_inH2O / IN_H2O_PER_IN_HG)) /
      (input.meterTemp_F + RANKINE_OFFSET),
  );
  const bws = w.number(BWS_STEP, vw / (vw + vmStd));

  const results: Record<string, number> = {
    condensateVaporStd_scf: vwc,
    silicaGelVaporStd_scf: vwsg,
    waterVaporStd_scf: vw,
    meterVolumeStd_dscf: vmStd,
    moistureFraction: bws,
  };

  if (input.stackTemp_F !== undefined && input.absoluteStackPressure_inHg !== undefined) {
    const pv = w.number(PV_STEP, mmHgToInHg(waterVaporPressure_mmHg(fahrenheitToCelsius(input.stackTemp_F))));
    const saturation = w.number(SATURATION_STEP, Math.min(pv / input.absoluteStackPressure_inHg, 1));
    const toUse = w.number(BWS_USE_STEP, Math.min(bws, saturation));
    results.waterVaporPressure_inHg = pv;
    results.saturationMoistureFraction = saturation;
    results.moistureFractionToUse = toUse;
    if (bws > saturation) {
      w.warn(
        `The measured moisture fraction ${fmt(bws)} is above saturation at ${fmt(input.stackTemp_F)} °F and ${fmt(input.absoluteStackPressure_inHg)} in. Hg (${fmt(saturation)}): the gas carries water droplets. Method 4 says to use the lower value, ${fmt(saturation)}.`,
      );
    }
  }
  return results;
}
