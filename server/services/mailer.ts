import nodemailer from 'nodemailer';
import type { Config } from '../config';

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  /** optional HTML alternative to `text` */
  html?: string;
}

export type SendMail = (mail: OutgoingMail) => Promise<void>;

/** Sends plain-text mail over SMTP (the local mail sink unless configured otherwise). */
export function createMailer(config: Pick<Config, 'smtpHost' | 'smtpPort' | 'mailFrom'>): SendMail {
  const transport = nodemailer.createTransport({
    host: config.smtpHost,
    port: config.smtpPort,
    secure: false,
    ignoreTLS: true,
    connectionTimeout: 5_000,
  });
  return async (mail) => {
    await transport.sendMail({ from: config.mailFrom, ...mail });
  };
}
