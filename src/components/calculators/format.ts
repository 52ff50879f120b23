/**
 * Display rounding for calculator numbers. Results arrive at full double precision; the screen
 * shows four significant figures (whole numbers from 1,000 up) and keeps the full value for hover
 * and copy.
 */

const grouped = new Intl.NumberFormat('en-US', { maximumFractionDigits: 0 });
const SUPERSCRIPT: Record<string, string> = {
  '-': '⁻', '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹',
};

export interface DisplayNumber {
  /** What the screen shows, e.g. "0.1411", "1,400,816", "3.409 × 10⁻⁴". */
  text: string;
  /** The value as JavaScript writes it, every digit kept. */
  full: string;
}

const SIGNIFICANT = 4;

export function formatNumber(value: number): DisplayNumber {
  const full = String(value);
  if (!Number.isFinite(value)) return { text: full, full };
  if (value === 0) return { text: '0', full };
  const size = Math.abs(value);
  if (size >= 1e9 || size < 1e-3) {
    const [mantissa, exponent] = value.toExponential(SIGNIFICANT - 1).split('e');
    const power = String(Number(exponent)).replace(/./g, (c) => SUPERSCRIPT[c] ?? c);
    return { text: `${mantissa.replace('-', '−')} × 10${power}`, full };
  }
  // Whole numbers (a point index, 745 °R) are exact; padding them with zeros would suggest otherwise.
  if (size >= 1000 || Number.isInteger(value)) return { text: grouped.format(value).replace('-', '−'), full };
  // toPrecision keeps trailing zeros, which are significant here ("0.1200").
  return { text: value.toPrecision(SIGNIFICANT).replace('-', '−'), full };
}

export function formatValue(value: unknown): DisplayNumber {
  if (typeof value === 'number') return formatNumber(value);
  if (typeof value === 'boolean') return { text: value ? 'Yes' : 'No', full: value ? 'yes' : 'no' };
  if (Array.isArray(value) && value.every((v) => typeof v === 'number')) {
    const parts = (value as number[]).map(formatNumber);
    return { text: parts.map((p) => p.text).join(', '), full: parts.map((p) => p.full).join(', ') };
  }
  const text = value === null || value === undefined ? '—' : String(value);
  return { text, full: text };
}

const SUFFIX_UNITS: [RegExp, string][] = [
  [/_in$/, 'in.'],
  [/_ft2$/, 'ft²'],
  [/_ft$/, 'ft'],
  [/_pct$/, '%'],
  [/_F$/, '°F'],
  [/_R$/, '°R'],
  [/_K$/, 'K'],
  [/_C$/, '°C'],
];

/** "distanceFromWall_in" → { label: "Distance from wall", unit: "in." }: the column heads of a table result. */
export function describeKey(key: string): { label: string; unit: string } {
  const match = SUFFIX_UNITS.find(([pattern]) => pattern.test(key));
  const bare = key.replace(/_[A-Za-z0-9]+$/, '');
  const words = bare.replace(/([a-z0-9])([A-Z])/g, '$1 $2').toLowerCase();
  return { label: words.charAt(0).toUpperCase() + words.slice(1), unit: match ? match[1] : '' };
}

/** Tab-separated rows: pastes into a spreadsheet as columns. */
export function toTsv(rows: string[][]): string {
  return rows.map((cells) => cells.map((cell) => cell.replace(/[\t\r\n]+/g, ' ')).join('\t')).join('\n');
}

export function relativeTime(iso: string, now = Date.now()): string {
  const seconds = Math.round((now - new Date(iso).getTime()) / 1000);
  if (seconds < 45) return 'just now';
  const minutes = Math.round(seconds / 60);
  if (minutes < 60) return `${minutes} min ago`;
  const hours = Math.round(minutes / 60);
  if (hours < 24) return `${hours} h ago`;
  return new Date(iso).toLocaleDateString();
}

const dateTime = new Intl.DateTimeFormat(undefined, { dateStyle: 'medium', timeStyle: 'short' });
export const formatDateTime = (iso: string) => dateTime.format(new Date(iso));
