/** Reads the mail catcher's REST API, as a person would read their inbox. */
export interface CaughtMail {
  id: string;
  subject: string;
  text: string;
  html?: string;
  to: { address: string }[];
}

export async function waitForMail(to: string, opts: { subject?: RegExp; timeoutMs?: number } = {}): Promise<CaughtMail> {
  const until = Date.now() + (opts.timeoutMs ?? 10_000);
  const api = process.env.MAIL_API_URL!;
  while (Date.now() < until) {
    const res = await fetch(`${api}/email?to.address=${encodeURIComponent(to)}`);
    const mails = (await res.json()) as CaughtMail[];
    const match = mails.filter((m) => !opts.subject || opts.subject.test(m.subject)).at(-1);
    if (match) return match;
    await new Promise((r) => setTimeout(r, 150));
  }
  throw new Error(`No mail to ${to}${opts.subject ? ` matching ${opts.subject}` : ''} arrived in time`);
}

export function linkIn(mail: CaughtMail, pattern: RegExp): string {
  const match = mail.text.match(pattern);
  if (!match) throw new Error(`No link matching ${pattern} in "${mail.subject}"`);
  return match[0];
}
