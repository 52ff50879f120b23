import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { NumberFormatError, parseNumber, tryParseNumber } from '../../../server/engine/grading/parse-number';

// Accepted notations: ENGINE.md "Drills and grading" (1.23e6, 1.23E+06, 1,234.5, 1.23×10^6) plus
// the spellings trainees type in practice (x, *, spaces, a bare leading point): common practice,
// no source. Each row: typed text, the same number written as a JavaScript literal, sig figs.
const accepted: [string, number, number][] = [
  ['1234.5', 1234.5, 5],
  ['-0.52', -0.52, 2],
  ['1.23e6', 1.23e6, 3],
  ['1.23E+06', 1.23e6, 3],
  ['4.5e-3', 4.5e-3, 2],
  ['1,234.5', 1234.5, 5],
  ['12,345,678', 12345678, 8],
  ['1.23×10^6', 1.23e6, 3],
  ['1.23x10^6', 1.23e6, 3],
  ['1.23X10^6', 1.23e6, 3],
  ['1.23 × 10^-6', 1.23e-6, 3],
  ['1.23*10^6', 1.23e6, 3],
  ['1.230 × 10^+6', 1.23e6, 4],
  ['  42.0  ', 42, 3],
  ['\t7\n', 7, 1],
  ['+3.5', 3.5, 2],
  ['.52', 0.52, 2],
  ['−0.52', -0.52, 2], // typographic minus sign, as pasted from a document
  ['1200.', 1200, 4],
  ['0', 0, 1],
];

// Rejected notations: ENGINE.md ("anything else is a clear validation error") and the brief's list.
const rejected = ['twelve', '1..2', '1,23,4', '12 34', '', '   ', 'NaN', 'Infinity', '-Infinity', '0x10', '1e', 'e5',
  '.', '-', '1.2.3', '1,2345', '1234,5', ',123', '1.23×10^', '10^6', '1.23 10^6', '1.23e6.5', '1e400', '1,234,56', '5%', '3 ft'];

describe('parseNumber: accepted forms', () => {
  it.each(accepted)('reads %j', (text, value, sigFigs) => {
    const parsed = parseNumber(text, 'velocity_fps');
    expect(parsed.value).toBe(value);
    expect(parsed.sigFigs).toBe(sigFigs);
    expect(parsed.text).toBe(text.trim());
  });

  // Property (common practice, no source): any finite double written by JavaScript itself in
  // plain, exponential or grouped form reads back to the same double.
  it('reads back every finite double JavaScript writes', () => {
    fc.assert(
      fc.property(fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e300, max: 1e300 }), fc.integer({ min: 1, max: 17 }), (x, digits) => {
        expect(parseNumber(String(x)).value).toBe(x === 0 ? 0 : x);
        const exp = x.toExponential(digits - 1);
        expect(parseNumber(exp).value).toBe(Number(exp));
        const times = exp.replace('e', '×10^');
        expect(parseNumber(times).value).toBe(Number(exp));
      }),
      { numRuns: 500 },
    );
  });

  it('reads thousands-grouped numbers as en-US writes them', () => {
    fc.assert(
      fc.property(fc.integer({ min: -1e12, max: 1e12 }), fc.integer({ min: 0, max: 3 }), (n, decimals) => {
        const value = n / 10 ** decimals;
        const grouped = value.toLocaleString('en-US', { minimumFractionDigits: decimals, maximumFractionDigits: decimals });
        expect(parseNumber(grouped).value).toBe(value === 0 ? 0 : value);
      }),
      { numRuns: 300 },
    );
  });
});

describe('parseNumber: rejected forms', () => {
  it.each(rejected)('refuses %j with the field named', (text) => {
    let caught: unknown;
    try {
      parseNumber(text, 'velocity_fps');
    } catch (error) {
      caught = error;
    }
    expect(caught).toBeInstanceOf(NumberFormatError);
    const error = caught as NumberFormatError;
    expect(error.field).toBe('velocity_fps');
    expect(error.message.startsWith('velocity_fps: ')).toBe(true);
    expect(error.message).toContain('1.23×10^6');
  });

  it('words the message as the brief asks', () => {
    expect(() => parseNumber('1..2', 'velocity_fps')).toThrow(
      "velocity_fps: '1..2' is not a number; write e.g. 1234.5, 1.23e6 or 1.23×10^6",
    );
  });

  it('tells an empty box apart from an unreadable one, and an overflow from both', () => {
    expect(tryParseNumber('', 'a')).toMatchObject({ ok: false, error: { problem: 'empty' } });
    expect(tryParseNumber('abc', 'a')).toMatchObject({ ok: false, error: { problem: 'not-a-number' } });
    expect(tryParseNumber('1e400', 'a')).toMatchObject({ ok: false, error: { problem: 'out-of-range' } });
    expect(tryParseNumber('1e-400', 'a')).toMatchObject({ ok: false, error: { problem: 'out-of-range' } });
  });

  it('shortens very long input in the message', () => {
    const long = '9'.repeat(200);
    expect(() => parseNumber(long, 'x')).toThrow(NumberFormatError);
    try {
      parseNumber(long, 'x');
    } catch (error) {
      expect((error as Error).message.length).toBeLessThan(120);
    }
  });
});

describe('parseNumber: significant figures (rule documented in parse-number.ts; common practice, no source)', () => {
  it.each([
    ['1200', 2, 2],
    ['1,200', 2, 2],
    ['1200.', 4, 0],
    ['1.200e3', 4, 0],
    ['1.200×10^3', 4, 0],
    ['120e3', 2, 4],
    ['0.0052', 2, -4],
    ['0.0500', 3, -4],
    ['1.50', 3, -2],
    ['1.23e6', 3, 4],
    ['1234.5', 5, -1],
    ['100.0', 4, -1],
    ['0.00', 2, -2],
    ['-0.000120', 3, -6],
  ] as [string, number, number][])('%j has %i significant figures, last one at 10^%i', (text, sigFigs, lastDigitExponent) => {
    const parsed = parseNumber(text);
    expect(parsed.sigFigs).toBe(sigFigs);
    expect(parsed.lastDigitExponent).toBe(lastDigitExponent);
  });
});
