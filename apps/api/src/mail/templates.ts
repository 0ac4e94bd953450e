const escapeHtml = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);

function layout(title: string, paragraphs: string[], action: { label: string; link: string }): string {
  const body = paragraphs.map((p) => `<p style="margin:0 0 16px">${escapeHtml(p)}</p>`).join('');
  return `<!doctype html><html><body style="margin:0;background:#faf7f2;font-family:'Source Sans 3',Arial,sans-serif;color:#1f2328">
<div style="max-width:560px;margin:0 auto;padding:32px 24px">
<h1 style="font-size:20px;margin:0 0 16px">${escapeHtml(title)}</h1>${body}
<p style="margin:24px 0"><a href="${escapeHtml(action.link)}" style="background:#2f6f5e;color:#fff;padding:10px 18px;border-radius:6px;text-decoration:none">${escapeHtml(action.label)}</a></p>
<p style="font-size:13px;color:#5b616b">If the button does not work, open this address: ${escapeHtml(action.link)}</p>
</div></body></html>`;
}

export function invitationMail(v: { name: string; invitedBy: string; link: string }) {
  const lines = [
    `Hello ${v.name},`,
    `${v.invitedBy} has invited you to Evenhand, where your district runs and reports its intervention studies.`,
    'Choose a password to activate your account. The link works once and expires in 72 hours.',
  ];
  return {
    subject: 'You are invited to Evenhand',
    text: `${lines.join('\n\n')}\n\nSet your password: ${v.link}\n`,
    html: layout('Welcome to Evenhand', lines, { label: 'Set your password', link: v.link }),
  };
}

export function roleInvitationMail(v: { name: string; invitedBy: string; role: string; siteName: string; link: string }) {
  const lines = [
    `Hello ${v.name},`,
    `${v.invitedBy} has named you ${v.role} at ${v.siteName} in Evenhand.`,
    'Sign in and accept to take on this role; until you do, nothing changes for your account. The link expires in 14 days.',
  ];
  return {
    subject: `Accept your role at ${v.siteName}`,
    text: `${lines.join('\n\n')}\n\nAccept the role: ${v.link}\n`,
    html: layout(`Your role at ${v.siteName}`, lines, { label: 'Accept the role', link: v.link }),
  };
}

export function passwordResetMail(v: { name: string; link: string }) {
  const lines = [
    `Hello ${v.name},`,
    'Someone asked to reset the password of your Evenhand account. If it was you, choose a new password below; the link works once and expires in one hour.',
    'If it was not you, ignore this message: your password stays as it is.',
  ];
  return {
    subject: 'Reset your Evenhand password',
    text: `${lines.join('\n\n')}\n\nChoose a new password: ${v.link}\n`,
    html: layout('Reset your password', lines, { label: 'Choose a new password', link: v.link }),
  };
}

export function reminderMail(v: { name: string; studyTitle: string; missing: string[]; link: string }) {
  const lines = [
    `Hello ${v.name},`,
    `These score sheets for “${v.studyTitle}” are still waiting for you:`,
    ...v.missing.map((m) => `• ${m}`),
    'Enter the scores in Evenhand, or upload a CSV, then press Submit. Thank you — every classroom counts.',
  ];
  return {
    subject: `Score sheets waiting: ${v.studyTitle}`,
    text: `${lines.join('\n')}\n\nOpen My classes: ${v.link}\n`,
    html: layout('Score sheets waiting for you', lines, { label: 'Open My classes', link: v.link }),
  };
}
