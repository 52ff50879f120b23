import type { CertificateStatus } from '../../../shared/certificates';

export type ShownStatus = CertificateStatus | 'not-found';

const MONTHS = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'];

/** 2026-03-14 → "14 Mar 2026": a calendar day, never shifted by the reader's time zone. */
export function formatDay(iso: string | null | undefined): string {
  if (!iso) return '—';
  const [y, m, d] = iso.slice(0, 10).split('-').map(Number);
  return `${d} ${MONTHS[m - 1]} ${y}`;
}

/** A moment (ISO timestamp) in the reader's own time, for logs. */
export function formatMoment(iso: string): string {
  return new Date(iso).toLocaleString('en-GB', { day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit' });
}

/** Whole days from today (UTC calendar) to the given day; negative when it has passed. */
export function daysUntil(iso: string, now = new Date()): number {
  const today = Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate());
  const [y, m, d] = iso.split('-').map(Number);
  return Math.round((Date.UTC(y, m - 1, d) - today) / 86_400_000);
}

export const STATUS_WORDS: Record<ShownStatus, { word: string; icon: string; explain: string }> = {
  valid: { word: 'Valid', icon: 'pi pi-check-circle', explain: 'This certificate is current.' },
  expired: { word: 'Expired', icon: 'pi pi-clock', explain: 'This certificate has run past its last valid day.' },
  revoked: { word: 'Revoked', icon: 'pi pi-ban', explain: 'Plumewright withdrew this certificate; it no longer counts.' },
  superseded: { word: 'Superseded', icon: 'pi pi-replay', explain: 'A newer certificate replaced this one (a renewal or a corrected copy). Ask the holder for the current number.' },
  'not-found': { word: 'Not found', icon: 'pi pi-question-circle', explain: 'No certificate has this number. Check it against the certificate, or ask the holder for the PDF.' },
};

/** Pulls a number out of what was pasted: a bare number, or a whole /verify/… address. */
export function numberFromInput(text: string): string {
  const trimmed = text.trim();
  const fromUrl = /\/verify\/([^/?#\s]+)/.exec(trimmed);
  return fromUrl ? decodeURIComponent(fromUrl[1]) : trimmed;
}

export const CERTIFICATE_NUMBER_EXAMPLE = 'PW-7K3M-Q9TD-R4E';
