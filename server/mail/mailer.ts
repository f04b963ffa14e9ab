import nodemailer from 'nodemailer';
import { logger } from '../logger';

export interface Mailer {
  /** Resolves true once the SMTP server accepted the message, false when sending failed (logged). */
  send(m: { to: string; subject: string; text: string }): Promise<boolean>;
}

/** Mail through nodemailer over SMTP (the local sink by default). A failed send is logged, never fatal to the request. */
export function createMailer(opts: { host: string; port: number; from: string }): Mailer {
  const transport = nodemailer.createTransport({ host: opts.host, port: opts.port, secure: false, ignoreTLS: true });
  return {
    async send(m) {
      try {
        await transport.sendMail({ from: opts.from, ...m });
        return true;
      } catch (err) {
        logger.warn({ err, to: m.to }, 'mail could not be sent');
        return false;
      }
    },
  };
}
