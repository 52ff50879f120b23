/** Our own e-mail wording; plain text first, with a small HTML twin. */
const escapeHtml = (s: string) => s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);

function layout(title: string, paragraphs: string[], action?: { label: string; url: string }) {
  const text = [title, '', ...paragraphs, ...(action ? ['', `${action.label}: ${action.url}`] : []), '', '— Plumewright'].join('\n');
  const html = `<div style="font-family:'Open Sans',Arial,sans-serif;max-width:560px;color:#1d2a35">
<h2 style="color:#0f5f59">${escapeHtml(title)}</h2>
${paragraphs.map((p) => `<p>${escapeHtml(p)}</p>`).join('\n')}
${action ? `<p><a href="${escapeHtml(action.url)}" style="background:#0f766e;color:#fff;padding:10px 16px;border-radius:6px;text-decoration:none">${escapeHtml(action.label)}</a></p><p style="font-size:12px;color:#56636f">${escapeHtml(action.url)}</p>` : ''}
<p style="font-size:12px;color:#56636f">Plumewright — training and certification for source-testing crews.</p></div>`;
  return { text, html };
}

export function passwordResetMail(name: string, url: string, validMinutes: number) {
  return {
    subject: 'Reset your Plumewright password',
    ...layout(
      `Hello ${name},`,
      [
        'Someone (we hope you) asked to reset the password of your Plumewright account.',
        `The link below works once and expires in ${validMinutes} minutes. If you did not ask for it, ignore this message: your password stays as it is.`,
      ],
      { label: 'Choose a new password', url },
    ),
  };
}

const ROLE_WORDS: Record<string, string> = { admin: 'company admin', manager: 'manager', crew: 'crew member' };

function listWords(words: string[]) {
  if (words.length <= 1) return words.join('');
  return `${words.slice(0, -1).join(', ')} and ${words.at(-1)}`;
}

export function invitationMail(opts: { name: string; companyName: string; inviterName: string | null; roles: string[]; url: string; expiresAt: Date }) {
  const expires = opts.expiresAt.toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });
  const who = opts.inviterName ? `${opts.inviterName} at ${opts.companyName}` : opts.companyName;
  return {
    subject: `${opts.companyName} invited you to Plumewright`,
    ...layout(
      `Hello ${opts.name},`,
      [
        `${who} invited you to join the company on Plumewright as ${listWords(opts.roles.map((r) => ROLE_WORDS[r] ?? r))}. Plumewright is where source-testing crews practise the reduction arithmetic of the reference methods, sit exams and keep their certificates.`,
        `The link below works once and until ${expires}. When it has expired, ask your company admin to send a new invitation.`,
      ],
      { label: 'Accept the invitation', url: opts.url },
    ),
  };
}

export function paymentReceiptMail(opts: { companyName: string; amount: string; invoiceNumber: string | null; paidAt: Date; periodEnd: Date | null; url: string | null; billingUrl: string }) {
  const day = (d: Date) => d.toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });
  return {
    subject: `Payment received: ${opts.amount} for ${opts.companyName}${opts.invoiceNumber ? ` (${opts.invoiceNumber})` : ''}`,
    ...layout(
      `Payment received for ${opts.companyName}`,
      [
        `We received ${opts.amount} on ${day(opts.paidAt)}${opts.invoiceNumber ? ` for invoice ${opts.invoiceNumber}` : ''}. Thank you.`,
        ...(opts.periodEnd ? [`Your seats are paid up to ${day(opts.periodEnd)}.`] : []),
        `Seats, invoices and the billing portal are on your company's billing page: ${opts.billingUrl}`,
      ],
      opts.url ? { label: 'View the receipt', url: opts.url } : undefined,
    ),
  };
}

export function certificateIssuedMail(opts: {
  name: string;
  number: string;
  area: string;
  issuedOn: string;
  expiresOn: string;
  verifyUrl: string;
  certificatesUrl: string;
  kind: 'first' | 'renewal' | 'correction';
}) {
  const day = (iso: string) => new Date(`${iso}T00:00:00Z`).toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });
  const opening = {
    first: `You passed the ${opts.area} exam, and your certificate is ready.`,
    renewal: `You passed the ${opts.area} exam again, so your certificate is renewed. The new certificate replaces your previous one, which now shows as superseded.`,
    correction: `Your ${opts.area} certificate was re-issued with your name corrected. It has a new number; the previous one now shows as superseded.`,
  }[opts.kind];
  return {
    subject: opts.kind === 'correction' ? `Your corrected Plumewright certificate: ${opts.area}` : `Your Plumewright certificate: ${opts.area}`,
    ...layout(
      `Hello ${opts.name},`,
      [
        opening,
        `Certificate number: ${opts.number}. Valid from ${day(opts.issuedOn)} through ${day(opts.expiresOn)}.`,
        `Download the PDF from your certificates page: ${opts.certificatesUrl}`,
        `Anyone can check the certificate at its public address, which is also the QR code on the PDF. Share it with whoever asks for proof: ${opts.verifyUrl}`,
        'The certificate records training on Plumewright; it does not replace the method text, agency requirements, accreditation or licensed professional judgement.',
      ],
      { label: 'See your certificates', url: opts.certificatesUrl },
    ),
  };
}

/** A calendar day (YYYY-MM-DD) in words; the day itself is already in the company's time zone. */
const calendarDay = (date: string) =>
  new Date(`${date}T12:00:00Z`).toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });
const daysWords = (days: number) => (days === 0 ? 'today is its last valid day' : days === 1 ? 'in 1 day' : `in ${days} days`);

export function expiryReminderMail(opts: { holderName: string; areaName: string; expiresOn: string; daysLeft: number; forHolder: boolean; companyName: string; url: string }) {
  const when = `${calendarDay(opts.expiresOn)} (${daysWords(opts.daysLeft)})`;
  if (opts.forHolder) {
    return {
      subject: `Your ${opts.areaName} certificate runs out on ${calendarDay(opts.expiresOn)}`,
      ...layout(
        `Hello ${opts.holderName},`,
        [
          `Your Plumewright certificate in ${opts.areaName} is valid until ${when}.`,
          'To renew it, work the refresher drills for the area and pass its exam again; the new certificate is issued as soon as you pass. Renewing inside the last 90 days keeps you continuously certified.',
        ],
        { label: 'Open your training', url: opts.url },
      ),
    };
  }
  return {
    subject: `${opts.holderName}: ${opts.areaName} certificate runs out on ${calendarDay(opts.expiresOn)}`,
    ...layout(
      `Certificate running out at ${opts.companyName}`,
      [
        `${opts.holderName}'s certificate in ${opts.areaName} is valid until ${when}.`,
        'You can assign a refresher drill or the exam from the crew readiness page, and check who is qualified for upcoming jobs.',
      ],
      { label: 'Open crew readiness', url: opts.url },
    ),
  };
}

export function weeklyDigestMail(opts: {
  managerName: string;
  companyName: string;
  week: string;
  today: string;
  timeZone: string;
  counts: { current: number; expiring: number; expired: number; none: number };
  expiringSoon: { name: string; areaName: string; expiresOn: string }[];
  overdue: { name: string; what: string; dueOn: string }[];
  url: string;
}) {
  const lines = [
    `Crew readiness on ${calendarDay(opts.today)} (${opts.timeZone}): ${opts.counts.current} current, ${opts.counts.expiring} to renew within 90 days, ${opts.counts.expired} lapsed, ${opts.counts.none} not held (member × area).`,
    opts.expiringSoon.length
      ? `Running out in the next 30 days: ${opts.expiringSoon.map((e) => `${e.name}, ${e.areaName}, ${calendarDay(e.expiresOn)}`).join('; ')}.`
      : 'Nothing runs out in the next 30 days.',
    opts.overdue.length
      ? `Overdue refreshers: ${opts.overdue.map((o) => `${o.name}, ${o.what}, due ${calendarDay(o.dueOn)}`).join('; ')}.`
      : 'No refresher assignments are overdue.',
  ];
  return {
    subject: `Crew readiness for ${opts.companyName}, week ${opts.week.slice(-2)}: ${opts.counts.expiring} to renew, ${opts.counts.expired} lapsed`,
    ...layout(`Hello ${opts.managerName}, here is this week's crew readiness`, lines, { label: 'Open crew readiness', url: opts.url }),
  };
}
