/** Reads what the app sent from maildev's REST API (version 3 serves it under /api/email). */
export interface CaughtMail {
  id: string;
  subject: string;
  text: string;
  html: string;
  to: { address: string; name?: string }[];
}

const base = () => process.env.MAILDEV_URL ?? 'http://127.0.0.1:1080';

export async function mailTo(address: string): Promise<CaughtMail[]> {
  const res = await fetch(`${base()}/api/email`);
  if (!res.ok) throw new Error(`maildev answered ${res.status}`);
  const all = (await res.json()) as CaughtMail[];
  return all.filter((m) => m.to.some((t) => t.address.toLowerCase() === address.toLowerCase()));
}

/** Waits for the n-th message to an address: every e-mail is sent by the outbox's job, after the response. */
export async function waitForMail(address: string, count = 1, timeoutMs = 30_000): Promise<CaughtMail[]> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const found = await mailTo(address);
    if (found.length >= count) return found;
    if (Date.now() > until) throw new Error(`expected ${count} message(s) to ${address}, found ${found.length}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

export const uniqueAddress = (label: string) => `${label}-${Date.now().toString(36)}${Math.random().toString(36).slice(2, 7)}@example.org`;

export function linkToken(mail: CaughtMail): string {
  const match = mail.text.match(/set-password\?token=([A-Za-z0-9_%-]+)/);
  if (!match) throw new Error('the message has no set-password link');
  return decodeURIComponent(match[1]);
}
