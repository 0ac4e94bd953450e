import nodemailer from 'nodemailer';
import type { Config } from '../config.js';

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html: string;
  /** Set by callers that must be able to recognise a repeat (a digest's Message-ID comes from its id). */
  messageId?: string;
  headers?: Record<string, string>;
}

export interface Mailer {
  send(mail: OutgoingMail): Promise<void>;
  close(): void;
}

/** SMTP through nodemailer: maildev on loopback in development and tests, the district's host in production. */
export function createMailer(config: Pick<Config, 'smtp' | 'mailFrom'>): Mailer {
  const transport = nodemailer.createTransport({
    host: config.smtp.host,
    port: config.smtp.port,
    secure: config.smtp.secure,
    auth: config.smtp.auth,
    // maildev speaks plain SMTP; a real host negotiates STARTTLS when it offers it.
    ignoreTLS: config.smtp.host === '127.0.0.1' || config.smtp.host === 'localhost',
    connectionTimeout: 10_000,
  });
  return {
    async send(mail) {
      await transport.sendMail({ from: config.mailFrom, ...mail });
    },
    close: () => transport.close(),
  };
}
