/**
 * Reads the number a trainee typed into an answer box.
 *
 * Accepted forms (leading and trailing spaces ignored, a leading + or - allowed, the typographic
 * minus sign − read as -):
 *   1234.5   -0.52   .52   1200.          plain decimals
 *   1,234.5  12,345,678                    thousands commas, in groups of exactly three
 *   1.23e6   1.23E+06   4.5e-3             e-notation
 *   1.23×10^6   1.23x10^6   1.23 × 10^-6   1.23*10^6   scientific notation with ×, x, X or *
 * Everything else (words, `1..2`, `1,23,4`, `12 34`, `NaN`, `Infinity`, `0x10`, an empty box) is
 * a NumberFormatError naming the field; a value that overflows or underflows a double is one too.
 *
 * Significant figures (returned with the value, used by the grader's rounding rule):
 *   - leading zeros never count: 0.0052 has 2;
 *   - with a decimal point, every digit from the first non-zero one counts, trailing zeros
 *     included: 1.50 has 3, 1200. has 4, 0.0500 has 3;
 *   - without a decimal point, trailing zeros of the whole number do not count (they may be
 *     placeholders): 1200 has 2, 1,200 has 2, 120e3 has 2; write 1200. or 1.200e3 to claim 4;
 *   - the exponent never counts: 1.23e6 has 3;
 *   - zero itself has as many as it shows after the point, at least one: 0 has 1, 0.00 has 2.
 * `lastDigitExponent` is the power of ten of the last significant digit (1234.5 → -1,
 * 1200 → 2, 1.23e6 → 4): half of 10^lastDigitExponent is how far the typed value may sit from
 * the exact one and still be that exact value rounded.
 */

export interface ParsedNumber {
  /** The value as a double. */
  value: number;
  /** Significant figures the trainee wrote (rules above). */
  sigFigs: number;
  /** Power of ten of the last significant digit written. */
  lastDigitExponent: number;
  /** The text as typed, trimmed. */
  text: string;
}

export type NumberProblem = 'empty' | 'not-a-number' | 'out-of-range';

export const NUMBER_FORMAT_HINT = 'write e.g. 1234.5, 1.23e6 or 1.23×10^6';

/** What the trainee typed cannot be read as a number; names the field and the problem. */
export class NumberFormatError extends Error {
  constructor(
    public readonly field: string,
    public readonly text: string,
    public readonly problem: NumberProblem,
  ) {
    super(describeProblem(field, text, problem));
    this.name = 'NumberFormatError';
  }
}

const MAX_INPUT_LENGTH = 64;

// sign, whole part (grouped by commas, or plain digits), optional fraction, optional exponent
// written either as e/E or as "× 10^" with ×, x, X or * (spaces allowed around the sign only).
const NUMBER_PATTERN =
  /^([+-]?)([1-9]\d{0,2}(?:,\d{3})+|\d*)(?:(\.)(\d*))?(?:[eE]([+-]?\d{1,4})|\s*[×xX*]\s*10\^([+-]?\d{1,4}))?$/;

export function parseNumber(input: string, field = 'value'): ParsedNumber {
  const text = input.trim();
  if (text === '') throw new NumberFormatError(field, input, 'empty');
  if (text.length > MAX_INPUT_LENGTH) throw new NumberFormatError(field, text, 'not-a-number');

  const match = NUMBER_PATTERN.exec(text.replace(/\u2212/g, '-'));
  if (!match) throw new NumberFormatError(field, text, 'not-a-number');
  const [, sign, wholeWritten, point, fractionWritten, eExponent, timesExponent] = match;
  const whole = wholeWritten.replace(/,/g, '');
  const fraction = fractionWritten ?? '';
  if (whole === '' && fraction === '') throw new NumberFormatError(field, text, 'not-a-number');
  const exponent = Number(eExponent ?? timesExponent ?? '0');

  const value = Number(`${sign}${whole || '0'}.${fraction || '0'}e${exponent}`);
  const digits = (whole + fraction).replace(/^0+/, '');
  const isZero = digits === '';
  if (!Number.isFinite(value) || (value === 0 && !isZero)) {
    throw new NumberFormatError(field, text, 'out-of-range');
  }

  let sigFigs: number;
  let lastDigitExponent: number;
  if (isZero) {
    sigFigs = Math.max(1, fraction.length);
    lastDigitExponent = exponent - fraction.length;
  } else if (point) {
    sigFigs = digits.length;
    lastDigitExponent = exponent - fraction.length;
  } else {
    const trimmed = digits.replace(/0+$/, '');
    sigFigs = trimmed.length;
    lastDigitExponent = exponent + (digits.length - trimmed.length);
  }
  return { value: value === 0 ? 0 : value, sigFigs, lastDigitExponent, text };
}

export type ParseOutcome = { ok: true; number: ParsedNumber } | { ok: false; error: NumberFormatError };

export function tryParseNumber(input: string, field = 'value'): ParseOutcome {
  try {
    return { ok: true, number: parseNumber(input, field) };
  } catch (error) {
    if (error instanceof NumberFormatError) return { ok: false, error };
    throw error;
  }
}

function describeProblem(field: string, text: string, problem: NumberProblem): string {
  const shown = text.length > 24 ? `${text.slice(0, 21)}...` : text;
  switch (problem) {
    case 'empty':
      return `${field}: nothing was entered; ${NUMBER_FORMAT_HINT}`;
    case 'out-of-range':
      return `${field}: '${shown}' is too large or too small to use; ${NUMBER_FORMAT_HINT}`;
    default:
      return `${field}: '${shown}' is not a number; ${NUMBER_FORMAT_HINT}`;
  }
}
