import { describe, expect, it } from 'vitest';
import {
  BODY_LENGTH, NUMBER_ALPHABET, checkSymbol, checksumHolds, formatNumber, generateCertificateNumber, parseCertificateNumber,
} from '../../server/services/certificate-number';

const bodyOf = (number: string) => number.replace(/^PW-/, '').replaceAll('-', '');
const FORMAT = /^PW-[0-9A-HJKMNPQRTV-Z]{4}-[0-9A-HJKMNPQRTV-Z]{4}-[0-9A-HJKMNPQRTV-Z]{3}$/;

describe('certificate number alphabet', () => {
  it('has 31 distinct symbols (a prime) and none of the look-alike letters', () => {
    expect(new Set(NUMBER_ALPHABET).size).toBe(31);
    expect(NUMBER_ALPHABET.length).toBe(31);
    for (const c of 'ILOSU') expect(NUMBER_ALPHABET).not.toContain(c);
  });
});

describe('generateCertificateNumber', () => {
  it('makes 100,000 numbers without a collision, each well-formed and passing its own check', () => {
    const seen = new Set<string>();
    for (let i = 0; i < 100_000; i++) {
      const number = generateCertificateNumber();
      if (i < 2_000) {
        expect(number).toMatch(FORMAT);
        expect(checksumHolds(bodyOf(number))).toBe(true);
      }
      seen.add(number);
    }
    expect(seen.size).toBe(100_000);
  });

  it('is not sequential: first symbols cover the whole alphabet and every symbol is about equally likely', () => {
    const numbers = Array.from({ length: 3_000 }, () => bodyOf(generateCertificateNumber()));
    const firstSymbols = new Set(numbers.map((n) => n[0]));
    expect(firstSymbols.size).toBe(31);
    const counts = new Map<string, number>();
    for (const n of numbers) for (const c of n.slice(0, 10)) counts.set(c, (counts.get(c) ?? 0) + 1);
    // 30,000 symbols over 31 values: each near 968; a biased generator would fall far outside this band.
    for (const c of NUMBER_ALPHABET) expect(counts.get(c)).toBeGreaterThan(800);
    for (const c of NUMBER_ALPHABET) expect(counts.get(c)).toBeLessThan(1_140);
  });
});

describe('check symbol', () => {
  const samples = Array.from({ length: 5_000 }, () => bodyOf(generateCertificateNumber()));

  it('catches every single-character substitution at every position', () => {
    let tried = 0;
    const missed: string[] = [];
    for (const body of samples) {
      for (let i = 0; i < BODY_LENGTH; i++) {
        for (const other of NUMBER_ALPHABET) {
          if (other === body[i]) continue;
          const typo = body.slice(0, i) + other + body.slice(i + 1);
          if (checksumHolds(typo)) missed.push(`${body} → ${typo}`);
          tried++;
        }
      }
    }
    expect(missed).toEqual([]);
    expect(tried).toBe(samples.length * BODY_LENGTH * 30);
  });

  it('catches every swap of two different neighbouring characters', () => {
    let tried = 0;
    const missed: string[] = [];
    for (const body of samples) {
      for (let i = 0; i < BODY_LENGTH - 1; i++) {
        if (body[i] === body[i + 1]) continue;
        const swapped = body.slice(0, i) + body[i + 1] + body[i] + body.slice(i + 2);
        if (checksumHolds(swapped)) missed.push(`${body} → ${swapped}`);
        tried++;
      }
    }
    expect(missed).toEqual([]);
    expect(tried).toBeGreaterThan(samples.length * 9);
  });

  it('catches every substitution and adjacent swap of a fixed body, exhaustively, including ones touching the check symbol', () => {
    const body = '7K3MQ9TDR4';
    const full = body + checkSymbol(body);
    expect(full).toBe('7K3MQ9TDR4E');
    expect(checksumHolds(full)).toBe(true);
    for (let i = 0; i < full.length; i++) {
      for (const other of NUMBER_ALPHABET) {
        if (other !== full[i]) expect(checksumHolds(full.slice(0, i) + other + full.slice(i + 1))).toBe(false);
      }
    }
    expect(checksumHolds(full.slice(0, 9) + full[10] + full[9])).toBe(false);
  });
});

describe('parseCertificateNumber', () => {
  const number = formatNumber('7K3MQ9TDR4E');

  it('accepts any case, spaces, dashes and a missing prefix', () => {
    for (const typed of ['PW-7K3M-Q9TD-R4E', 'pw-7k3m-q9td-r4e', ' pw 7k3m q9td r4e ', '7K3MQ9TDR4E', '7k3m-q9td-r4e', 'PW7K3MQ9TDR4E', 'PW – 7K3M.Q9TD.R4E']) {
      expect(parseCertificateNumber(typed), typed).toEqual({ ok: true, number });
    }
  });

  it('reads the left-out look-alike letters as the digits they resemble', () => {
    const body = '10Q5Z7K3MA';
    const canonical = formatNumber(body + checkSymbol(body));
    expect(parseCertificateNumber(canonical)).toEqual({ ok: true, number: canonical });
    expect(parseCertificateNumber(canonical.replace('10Q5', 'IOQS'))).toEqual({ ok: true, number: canonical });
    expect(parseCertificateNumber(canonical.replace('10Q5', 'loqs'))).toEqual({ ok: true, number: canonical });
  });

  it('explains each kind of malformed input', () => {
    const empty = parseCertificateNumber('  - ');
    expect(empty).toMatchObject({ ok: false, reason: 'empty' });
    const chars = parseCertificateNumber('PW-7K3M-Q9TD-R4#');
    expect(chars).toMatchObject({ ok: false, reason: 'characters' });
    expect(!chars.ok && chars.message).toContain('"#"');
    const short = parseCertificateNumber('PW-7K3M-Q9TD');
    expect(short).toMatchObject({ ok: false, reason: 'length' });
    expect(!short.ok && short.message).toContain('has 8 characters');
    const typo = parseCertificateNumber('PW-7K3M-Q9DT-R4E');
    expect(typo).toMatchObject({ ok: false, reason: 'check' });
    expect(!typo.ok && typo.message).toMatch(/mistyped|swapped/);
  });
});
