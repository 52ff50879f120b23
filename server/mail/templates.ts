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
