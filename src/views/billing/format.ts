import type { SeatInterval } from '../../../shared/billing';

/** Money in minor units (cents) as the payment service reports it, shown in its currency. */
export function formatMoney(amountMinor: number, currency: string): string {
  const format = new Intl.NumberFormat('en-US', { style: 'currency', currency: currency.toUpperCase() });
  const digits = format.resolvedOptions().maximumFractionDigits ?? 2;
  return format.format(amountMinor / 10 ** digits);
}

export function formatDay(iso: string | null | undefined): string {
  if (!iso) return '—';
  return new Date(iso).toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric' });
}

export const INTERVAL_WORDS: Record<SeatInterval, { adjective: string; per: string }> = {
  month: { adjective: 'Monthly', per: 'per month' },
  year: { adjective: 'Yearly', per: 'per year' },
};

export function seatsWord(n: number): string {
  return `${n} ${n === 1 ? 'seat' : 'seats'}`;
}
