import 'server-only';
import nodemailer, { type Transporter } from 'nodemailer';
import { serverEnv } from '@/lib/env';

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html: string;
}

let transporter: Transporter | undefined;

function transport(): Transporter {
  if (transporter) return transporter;
  const env = serverEnv();
  transporter = nodemailer.createTransport({
    host: env.SMTP_HOST,
    port: env.SMTP_PORT,
    secure: env.SMTP_SECURE,
    ignoreTLS: env.SMTP_IGNORE_TLS,
    auth: env.SMTP_USER ? { user: env.SMTP_USER, pass: env.SMTP_PASSWORD ?? '' } : undefined,
  });
  return transporter;
}

/** Sends through SMTP: the local sink in development and tests, a real provider in production. */
export async function sendMail(mail: OutgoingMail): Promise<void> {
  await transport().sendMail({ from: serverEnv().MAIL_FROM, ...mail });
}
