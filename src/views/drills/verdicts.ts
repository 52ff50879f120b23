import type { Verdict } from './drills-api';

/** How each verdict reads on screen: our own words, an icon, and a tone that is not colour alone. */
export const VERDICTS: Record<Verdict, { label: string; icon: string; tone: 'good' | 'credit' | 'bad' | 'none' }> = {
  correct: { label: 'Right', icon: 'pi pi-check-circle', tone: 'good' },
  'carried-forward': { label: 'Method credit', icon: 'pi pi-arrow-circle-right', tone: 'credit' },
  incorrect: { label: 'Not right', icon: 'pi pi-times-circle', tone: 'bad' },
  blank: { label: 'Left blank', icon: 'pi pi-minus-circle', tone: 'none' },
};

export const ACCEPTED_NOTATION = 'Accepted: 1234.5, 1,234.5, 1.23e6 or 1.23×10^6';
