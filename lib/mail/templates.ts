import type { OutgoingMail } from './mailer';

const escapeHtml = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] ?? c);

/** One plain layout for every message: a heading, a paragraph, one button, the link spelled out. */
function compose(to: string, subject: string, lines: string[], action: { label: string; url: string }, footer: string): OutgoingMail {
  const text = [...lines, '', `${action.label}: ${action.url}`, '', footer].join('\n');
  const html = `<!doctype html><html><body style="margin:0;background:#f6f2ea;color:#1c1b19;font-family:Inter,Arial,sans-serif">
<div style="max-width:520px;margin:32px auto;padding:28px;background:#fffdf8;border:1px solid #ddd5c4">
<p style="margin:0 0 18px;font-size:13px;letter-spacing:.12em;text-transform:uppercase;color:#7a7265">Asterism</p>
${lines.map((l) => `<p style="margin:0 0 14px;line-height:1.5">${escapeHtml(l)}</p>`).join('\n')}
<p style="margin:22px 0"><a href="${escapeHtml(action.url)}" style="display:inline-block;padding:10px 18px;background:#1e4d5c;color:#fffdf8;text-decoration:none">${escapeHtml(action.label)}</a></p>
<p style="margin:0 0 14px;font-size:13px;color:#5b5548;word-break:break-all">${escapeHtml(action.url)}</p>
<p style="margin:18px 0 0;font-size:12px;color:#7a7265">${escapeHtml(footer)}</p>
</div></body></html>`;
  return { to, subject, text, html };
}

export function invitationMail(input: {
  to: string;
  workspaceName: string;
  inviterName: string;
  role: string;
  url: string;
  expiresAt: Date;
}): OutgoingMail {
  return compose(
    input.to,
    `${input.inviterName} invited you to ${input.workspaceName} on Asterism`,
    [
      `${input.inviterName} invited you to join the workspace “${input.workspaceName}” as ${input.role}.`,
      'Open the link to accept. If you have no Asterism account yet, you can create one with this address.',
    ],
    { label: 'Accept the invitation', url: input.url },
    `The link works once and expires on ${input.expiresAt.toUTCString()}. If you did not expect it, ignore this message.`,
  );
}

export function passwordResetMail(input: { to: string; url: string; minutes: number }): OutgoingMail {
  return compose(
    input.to,
    'Reset your Asterism password',
    ['Someone asked to reset the password of the Asterism account for this address.'],
    { label: 'Choose a new password', url: input.url },
    `The link works once and expires in ${input.minutes} minutes. If it was not you, ignore this message; your password stays as it is.`,
  );
}

export function magicLinkMail(input: { to: string; url: string; minutes: number }): OutgoingMail {
  return compose(
    input.to,
    'Your Asterism sign-in link',
    ['Use this link to sign in to Asterism.'],
    { label: 'Sign in', url: input.url },
    `The link works once and expires in ${input.minutes} minutes. If you did not ask for it, ignore this message.`,
  );
}
