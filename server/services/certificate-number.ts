import crypto from 'node:crypto';

/**
 * Certificate numbers: `PW-XXXX-XXXX-XXC`, ten random symbols and one check symbol.
 *
 * The alphabet has 31 symbols (a prime): the digits and the capital letters without I, L, O, S and U,
 * so that 1/I/L, 0/O, 5/S and U/V cannot be confused on paper or on a screen. Letters that were left
 * out are read as the digit they are mistaken for (O → 0, I and L → 1, S → 5), so a number copied by
 * eye still finds its certificate.
 *
 * Check symbol: with values v₁…v₁₁ (v₁₁ the check symbol) and weights wᵢ = i, the number is
 * well-formed when Σ i·vᵢ ≡ 0 (mod 31). Because 31 is prime and every weight is 1…11 (never 0 mod 31):
 *  - one wrong symbol at position i changes the sum by i·(v − v′), and neither factor is 0 mod 31;
 *  - swapping neighbours i, i+1 changes it by (wᵢ − wᵢ₊₁)(vᵢ₊₁ − vᵢ) = −(vᵢ₊₁ − vᵢ), non-zero when
 *    the two symbols differ.
 * So every single substitution and every adjacent transposition is caught (tests/unit proves it).
 */
export const NUMBER_ALPHABET = '0123456789ABCDEFGHJKMNPQRTVWXYZ';
const MODULUS = NUMBER_ALPHABET.length; // 31, prime
export const NUMBER_PREFIX = 'PW';
export const RANDOM_LENGTH = 10;
/** Symbols after the prefix: ten random plus the check symbol. */
export const BODY_LENGTH = RANDOM_LENGTH + 1;

const LOOK_ALIKES: Record<string, string> = { O: '0', I: '1', L: '1', S: '5' };
const VALUE = new Map([...NUMBER_ALPHABET].map((symbol, value) => [symbol, value]));

if (MODULUS !== 31) throw new Error('The certificate number alphabet must have 31 symbols.');

/** The symbol that makes Σ i·vᵢ ≡ 0 (mod 31) for the given random body. */
export function checkSymbol(body: string): string {
  let sum = 0;
  for (let i = 0; i < body.length; i++) sum += (i + 1) * VALUE.get(body[i])!;
  const w = body.length + 1;
  // c = −sum · w⁻¹ (mod 31); w⁻¹ = w^(31−2) by Fermat's little theorem.
  let inverse = 1;
  for (let k = 0; k < MODULUS - 2; k++) inverse = (inverse * w) % MODULUS;
  const value = (((MODULUS - (sum % MODULUS)) % MODULUS) * inverse) % MODULUS;
  return NUMBER_ALPHABET[value];
}

/** True when the eleven symbols satisfy the check equation. */
export function checksumHolds(body: string): boolean {
  let sum = 0;
  for (let i = 0; i < body.length; i++) {
    const value = VALUE.get(body[i]);
    if (value === undefined) return false;
    sum += (i + 1) * value;
  }
  return sum % MODULUS === 0;
}

/** `PW-` and the eleven symbols in groups of 4, 4 and 3. */
export function formatNumber(body: string): string {
  return `${NUMBER_PREFIX}-${body.slice(0, 4)}-${body.slice(4, 8)}-${body.slice(8)}`;
}

/** A fresh random number (crypto), never derived from a sequence. */
export function generateCertificateNumber(): string {
  // Rejection sampling keeps every symbol equally likely: 248 = 8 × 31 is the largest multiple below 256.
  let body = '';
  while (body.length < RANDOM_LENGTH) {
    for (const byte of crypto.randomBytes(16)) {
      if (byte < 248 && body.length < RANDOM_LENGTH) body += NUMBER_ALPHABET[byte % MODULUS];
    }
  }
  return formatNumber(body + checkSymbol(body));
}

export type ParsedNumber =
  | { ok: true; number: string }
  | { ok: false; reason: 'empty' | 'characters' | 'length' | 'check'; message: string };

/**
 * Reads what a person typed, pasted or heard: any case, spaces, dashes and dots, the `PW` prefix or
 * not, and the look-alike letters the alphabet leaves out. Answers the canonical form or the reason
 * it cannot be a certificate number, worded for the person who typed it.
 */
export function parseCertificateNumber(input: string): ParsedNumber {
  const squeezed = input.normalize('NFKC').toUpperCase().replace(/[\s\-‐‑–—_.·/]+/g, '');
  if (!squeezed) return { ok: false, reason: 'empty', message: 'is empty: type the number printed on the certificate, like PW-7K3M-Q9TD-R4E' };
  let body = squeezed;
  // Eleven symbols may begin with P, W by chance; any other length starting PW carries the prefix.
  if (body.length !== BODY_LENGTH && body.startsWith(NUMBER_PREFIX)) body = body.slice(NUMBER_PREFIX.length);
  const bad = [...new Set([...body].filter((c) => !VALUE.has(c) && !LOOK_ALIKES[c]))];
  if (bad.length) {
    return {
      ok: false,
      reason: 'characters',
      message: `contains ${bad.map((c) => `"${c}"`).join(', ')}, which never appear${bad.length === 1 ? 's' : ''} in a certificate number (it uses digits and the letters A–Z except I, L, O, S and U)`,
    };
  }
  body = [...body].map((c) => LOOK_ALIKES[c] ?? c).join('');
  if (body.length !== BODY_LENGTH) {
    return {
      ok: false,
      reason: 'length',
      message: `has ${body.length} character${body.length === 1 ? '' : 's'} after "PW"; a certificate number has ${BODY_LENGTH} (like PW-7K3M-Q9TD-R4E)`,
    };
  }
  if (!checksumHolds(body)) {
    return {
      ok: false,
      reason: 'check',
      message: 'does not add up: its last character does not match the others, so one character is probably mistyped or two neighbours are swapped. Compare it with the certificate, character by character',
    };
  }
  return { ok: true, number: formatNumber(body) };
}
