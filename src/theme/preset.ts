import { definePreset } from '@primeuix/themes';
import Aura from '@primeuix/themes/aura';

/**
 * Plumewright's own palette. Contrast was checked against WCAG AA (4.5:1 for body text):
 * plume.600 on white 5.8, ash.600 on white/ash.50 ≥ 6.7, plume.300 on ash.900 8.2,
 * ash.400 on ash.900 6.2, ember.800 on ember.50 8.1.
 */
const plume = {
  50: '#eef8f7',
  100: '#d3eeeb',
  200: '#a8ddd7',
  300: '#74c5bd',
  400: '#45a79f',
  500: '#2a8a83',
  600: '#1d716b',
  700: '#175d59',
  800: '#154b48',
  900: '#133e3c',
  950: '#082524',
};

/** Neutral surfaces with a faint blue-green cast, so they sit quietly beside the primary. */
const ash = {
  0: '#ffffff',
  50: '#f6f8f8',
  100: '#eceff0',
  200: '#dce2e4',
  300: '#c3ccd0',
  400: '#94a1a7',
  500: '#66747b',
  600: '#4c5a61',
  700: '#39454b',
  800: '#252f34',
  900: '#182024',
  950: '#0d1417',
};

/** Warm accent reserved for cautions and "needs attention" states. */
const ember = {
  50: '#fff8eb',
  100: '#feecc7',
  200: '#fcd68a',
  300: '#f8bb4e',
  400: '#f0a02a',
  500: '#d98a1c',
  600: '#b56d12',
  700: '#8f5410',
  800: '#6f4112',
  900: '#5a3512',
  950: '#331c06',
};

const scale = (name: string) =>
  Object.fromEntries([50, 100, 200, 300, 400, 500, 600, 700, 800, 900, 950].map((step) => [step, `{${name}.${step}}`]));

/** One tone set per message severity: readable text on a tinted ground, in both schemes. */
const messageTone = (light: [string, string, string], dark: [string, string, string]) => ({
  light: {
    background: light[0],
    borderColor: light[1],
    color: light[2],
    closeButton: { hoverBackground: light[1], focusRing: { color: light[2], shadow: 'none' } },
    outlined: { color: light[2], borderColor: light[2] },
    simple: { color: light[2] },
  },
  dark: {
    background: dark[0],
    borderColor: dark[1],
    color: dark[2],
    closeButton: { hoverBackground: dark[1], focusRing: { color: dark[2], shadow: 'none' } },
    outlined: { color: dark[2], borderColor: dark[2] },
    simple: { color: dark[2] },
  },
});

const info = messageTone(['{plume.50}', '{plume.200}', '{plume.800}'], ['{plume.950}', '{plume.800}', '{plume.200}']);
const success = messageTone(['{green.50}', '{green.200}', '{green.800}'], ['{green.950}', '{green.800}', '{green.200}']);
const warn = messageTone(['{ember.50}', '{ember.200}', '{ember.800}'], ['{ember.950}', '{ember.800}', '{ember.200}']);
const error = messageTone(['{red.50}', '{red.200}', '{red.800}'], ['{red.950}', '{red.800}', '{red.200}']);
const secondary = messageTone(['{ash.100}', '{ash.200}', '{ash.700}'], ['{ash.800}', '{ash.700}', '{ash.200}']);

export const PlumewrightPreset = definePreset(Aura, {
  primitive: { plume, ash, ember },
  semantic: {
    primary: scale('plume'),
    focusRing: { width: '2px', style: 'solid', color: '{primary.color}', offset: '2px', shadow: 'none' },
    formField: {
      focusRing: { width: '2px', style: 'solid', color: '{primary.color}', offset: '1px', shadow: 'none' },
    },
    colorScheme: {
      light: {
        surface: scale('ash'),
        primary: {
          color: '{plume.600}',
          contrastColor: '#ffffff',
          hoverColor: '{plume.700}',
          activeColor: '{plume.800}',
        },
        highlight: {
          background: '{plume.50}',
          focusBackground: '{plume.100}',
          color: '{plume.800}',
          focusColor: '{plume.900}',
        },
        text: {
          color: '{ash.800}',
          hoverColor: '{ash.900}',
          mutedColor: '{ash.600}',
          hoverMutedColor: '{ash.700}',
        },
        formField: {
          borderColor: '{ash.400}',
          hoverBorderColor: '{ash.500}',
          color: '{ash.800}',
          placeholderColor: '{ash.600}',
          floatLabelColor: '{ash.600}',
          floatLabelActiveColor: '{ash.600}',
          iconColor: '{ash.600}',
          invalidBorderColor: '{red.700}',
          invalidPlaceholderColor: '{red.700}',
        },
      },
      dark: {
        surface: scale('ash'),
        primary: {
          color: '{plume.300}',
          contrastColor: '{ash.950}',
          hoverColor: '{plume.200}',
          activeColor: '{plume.100}',
        },
        highlight: {
          background: 'color-mix(in srgb, {plume.300}, transparent 84%)',
          focusBackground: 'color-mix(in srgb, {plume.300}, transparent 76%)',
          color: '{plume.100}',
          focusColor: '{plume.50}',
        },
        text: {
          color: '{ash.50}',
          hoverColor: '{ash.0}',
          mutedColor: '{ash.300}',
          hoverMutedColor: '{ash.200}',
        },
        formField: {
          background: '{ash.950}',
          borderColor: '{ash.500}',
          hoverBorderColor: '{ash.400}',
          color: '{ash.50}',
          placeholderColor: '{ash.400}',
          floatLabelColor: '{ash.400}',
          floatLabelActiveColor: '{ash.400}',
          iconColor: '{ash.400}',
        },
        content: {
          background: '{ash.900}',
          hoverBackground: '{ash.800}',
          borderColor: '{ash.700}',
        },
      },
    },
  },
  components: {
    // Segmented choices (SelectButton, ToggleButton). Aura's picked option is a white chip on a grey
    // track (1.2:1) with faint unpicked labels (4.2:1); ours fills the picked chip with the primary
    // (5.0:1 against the track) and keeps every label at AA: white on plume.600 5.8, ash.600 on
    // ash.100 6.2; dark: ash.950 on plume.300 9.3, ash.300 on ash.950 11.4.
    togglebutton: {
      colorScheme: {
        light: {
          root: {
            background: '{ash.100}',
            hoverBackground: '{ash.100}',
            checkedBackground: '{ash.100}',
            borderColor: '{ash.300}',
            checkedBorderColor: '{ash.300}',
            color: '{ash.600}',
            hoverColor: '{ash.900}',
            checkedColor: '#ffffff',
          },
          content: { checkedBackground: '{plume.600}' },
          icon: { color: '{ash.600}', hoverColor: '{ash.900}', checkedColor: '#ffffff' },
        },
        dark: {
          root: {
            background: '{ash.950}',
            hoverBackground: '{ash.950}',
            checkedBackground: '{ash.950}',
            borderColor: '{ash.700}',
            checkedBorderColor: '{ash.700}',
            color: '{ash.300}',
            hoverColor: '{ash.50}',
            checkedColor: '{ash.950}',
          },
          content: { checkedBackground: '{plume.300}' },
          icon: { color: '{ash.300}', hoverColor: '{ash.50}', checkedColor: '{ash.950}' },
        },
      },
    },
    message: {
      colorScheme: {
        light: {
          info: info.light,
          success: success.light,
          warn: warn.light,
          error: error.light,
          secondary: secondary.light,
        },
        dark: {
          info: info.dark,
          success: success.dark,
          warn: warn.dark,
          error: error.dark,
          secondary: secondary.dark,
        },
      },
    },
    tag: {
      colorScheme: {
        light: {
          primary: { background: '{plume.100}', color: '{plume.800}' },
          warn: { background: '{ember.100}', color: '{ember.800}' },
          secondary: { background: '{ash.100}', color: '{ash.700}' },
        },
        dark: {
          primary: { background: '{plume.900}', color: '{plume.100}' },
          warn: { background: '{ember.950}', color: '{ember.200}' },
          secondary: { background: '{ash.800}', color: '{ash.200}' },
        },
      },
    },
  },
});

/** The class on <html> that switches PrimeVue and our own styles to the dark scheme. */
export const DARK_CLASS = 'pw-dark';
