import nodemailer from 'nodemailer';
import { logger } from '../logger';

export interface Mailer {
  send(m: { to: string; subject: string; text: string }): Promise<void>;
}

/** Mail through nodemailer over SMTP (the local sink by default). A failed send is logged, never fatal to the request. */
export function createMailer(opts: { host: string; port: number; from: string }): Mailer {
  const transport = nodemailer.createTransport({ host: opts.host, port: opts.port, secure: false, ignoreTLS: true });
  return {
    async send(m) {
      try {
        await transport.sendMail({ from: opts.from, ...m });
      } catch (err) {
        logger.warn({ err, to: m.to }, 'mail could not be sent');
      }
    },
  };
}
