/**
 * Stripe's published test card numbers and what the hosted payment page does with them.
 * Any other number is refused: the page never takes a real card.
 */
export const SUCCESS_CARDS: readonly string[] = [
  '4242424242424242', // Visa
  '4000056655665556', // Visa (debit)
  '5555555555554444', // Mastercard
  '2223003122003222', // Mastercard (2-series)
  '5200828282828210', // Mastercard (debit)
  '378282246310005', // American Express
  '371449635398431', // American Express
  '6011111111111117', // Discover
  '3056930009020004', // Diners Club
  '3566002020360505', // JCB
  '6200000000000005', // UnionPay
];

export interface Decline {
  code: string;
  message: string;
}

export const DECLINE_CARDS: Readonly<Record<string, Decline>> = {
  '4000000000000002': { code: 'card_declined', message: 'Your card was declined.' },
  '4000000000009995': { code: 'insufficient_funds', message: 'Your card has insufficient funds.' },
  '4000000000009987': { code: 'lost_card', message: 'Your card was declined.' },
  '4000000000009979': { code: 'stolen_card', message: 'Your card was declined.' },
  '4000000000000069': { code: 'expired_card', message: 'Your card has expired.' },
  '4000000000000127': { code: 'incorrect_cvc', message: "Your card's security code is incorrect." },
  '4000000000000119': { code: 'processing_error', message: 'An error occurred while processing your card. Try again in a little bit.' },
};

export interface PaymentForm {
  email?: string;
  cardholder_name?: string;
  card_number?: string;
  card_expiry?: string;
  card_cvc?: string;
}

export type PaymentOutcome =
  | { kind: 'invalid'; problems: Partial<Record<keyof PaymentForm, string>> }
  | { kind: 'declined'; decline: Decline }
  | { kind: 'approved'; email: string | null; name: string };

function passesLuhn(digits: string): boolean {
  let sum = 0;
  for (let index = 0; index < digits.length; index++) {
    let digit = Number(digits[digits.length - 1 - index]);
    if (index % 2 === 1) {
      digit *= 2;
      if (digit > 9) digit -= 9;
    }
    sum += digit;
  }
  return sum % 10 === 0;
}

/** Checks the form like a card form would, then applies the test card's scripted result. */
export function judgePayment(form: PaymentForm, options: { emailNeeded: boolean; nowSeconds: number }): PaymentOutcome {
  const problems: Partial<Record<keyof PaymentForm, string>> = {};
  const email = (form.email ?? '').trim();
  if (options.emailNeeded && !/^[^\s@]+@[^\s@]+\.[^\s@]+$/.test(email)) problems.email = 'Enter a valid email address.';
  const name = (form.cardholder_name ?? '').trim();
  if (!name) problems.cardholder_name = 'Enter the name on the card.';

  const number = (form.card_number ?? '').replace(/[\s-]/g, '');
  if (!/^\d{12,19}$/.test(number) || !passesLuhn(number)) problems.card_number = 'Your card number is incorrect.';
  else if (!SUCCESS_CARDS.includes(number) && !(number in DECLINE_CARDS)) {
    problems.card_number = 'Use a test card number such as 4242 4242 4242 4242. This page never accepts real cards.';
  }

  const expiry = /^\s*(\d{1,2})\s*\/\s*(\d{2}|\d{4})\s*$/.exec(form.card_expiry ?? '');
  const month = expiry ? Number(expiry[1]) : 0;
  if (!expiry || month < 1 || month > 12) problems.card_expiry = 'Enter the expiry date as MM / YY.';
  else {
    const year = expiry[2].length === 2 ? 2000 + Number(expiry[2]) : Number(expiry[2]);
    const firstSecondAfterExpiry = Date.UTC(year, month, 1) / 1000; // cards are valid through their expiry month
    if (firstSecondAfterExpiry <= options.nowSeconds) problems.card_expiry = "Your card's expiration date is in the past.";
  }
  if (!/^\d{3,4}$/.test((form.card_cvc ?? '').trim())) problems.card_cvc = "Your card's security code is incomplete.";

  if (Object.keys(problems).length > 0) return { kind: 'invalid', problems };
  const decline = DECLINE_CARDS[number];
  if (decline) return { kind: 'declined', decline };
  return { kind: 'approved', email: email || null, name };
}
