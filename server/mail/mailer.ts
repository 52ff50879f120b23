import nodemailer from 'nodemailer';
import type { Logger } from 'pino';
import type { AppConfig } from '../config';

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html?: string;
}

export interface Mailer {
  send(mail: OutgoingMail): Promise<void>;
  close(): void;
}

/** The one mail path: nodemailer over SMTP (the local mail catcher in development and tests). */
export function createMailer(config: AppConfig, logger: Logger): Mailer {
  const transport = nodemailer.createTransport({
    host: config.smtp.host,
    port: config.smtp.port,
    secure: false,
    ignoreTLS: config.smtp.host === '127.0.0.1' || config.smtp.host === 'localhost',
    connectionTimeout: 5_000,
    greetingTimeout: 5_000,
  });
  return {
    async send(mail) {
      await transport.sendMail({ from: config.smtp.from, ...mail });
      logger.info({ to: mail.to, subject: mail.subject }, 'mail sent');
    },
    close: () => transport.close(),
  };
}
