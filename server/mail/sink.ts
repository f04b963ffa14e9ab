/**
 * A local stand-in for a hosted mail service: an SMTP server on 127.0.0.1
 * that accepts every message and keeps it as an .eml file under
 * storage/mail/. The app starts it itself; each kept message is also handed
 * to `onMessage` (the Outbox parses and stores it, server/mail/outbox.ts)
 * before the SMTP answer, so a sent message is readable at /api/admin/mail as
 * soon as the send returns. Messages hold single-use account links, so the
 * folder is 0700 and each file 0600 (written to a temporary name, then renamed
 * into place). Given a file store, the files are kept through it under
 * `mail/<name>.eml` instead (the local driver writes the same private files in
 * `<storage>/mail`; the S3 driver keeps them in the shared bucket).
 */
import fs from 'node:fs';
import path from 'node:path';
import crypto from 'node:crypto';
import { SMTPServer } from 'smtp-server';
import type { FileStore } from '../storage/fileStore';

export interface MailSink {
  port: number;
  dir: string;
  close(): Promise<void>;
}

/** Make the folder private to the server's user, and any message already in it (older versions wrote them 0644). */
function tightenSink(dir: string) {
  fs.mkdirSync(dir, { recursive: true, mode: 0o700 });
  fs.chmodSync(dir, 0o700);
  for (const f of fs.readdirSync(dir)) {
    const p = path.join(dir, f);
    if (fs.lstatSync(p).isFile()) fs.chmodSync(p, 0o600);
  }
}

/** A message the sink kept: its file name, raw bytes and the SMTP envelope's recipients. */
export interface ReceivedMail {
  file: string;
  raw: Buffer;
  envelopeTo: string[];
}

export function startMailSink(dir: string, port = 0, onMessage?: (m: ReceivedMail) => Promise<void>, store?: FileStore): Promise<MailSink> {
  tightenSink(dir);
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (c: Buffer) => chunks.push(c));
      stream.on('end', () => {
        const name = `${new Date().toISOString().replace(/[:.]/g, '-')}-${crypto.randomBytes(4).toString('hex')}.eml`;
        const raw = Buffer.concat(chunks);
        const keep = async () => {
          if (store) return store.put(`mail/${name}`, raw, { private: true });
          const tmp = path.join(dir, `.${name}.part`);
          try {
            // 'wx': never reuse or follow an existing file; the mode is set at creation, before any byte is written.
            fs.writeFileSync(tmp, raw, { mode: 0o600, flag: 'wx' });
            fs.renameSync(tmp, path.join(dir, name));
          } catch (err) {
            fs.rmSync(tmp, { force: true });
            throw err;
          }
        };
        const envelopeTo = session.envelope.rcptTo.map((r) => r.address);
        keep().then(
          // the file is kept whatever happens next; a failed hand-over is the hook's to log
          () =>
            Promise.resolve(onMessage?.({ file: name, raw, envelopeTo })).then(
              () => callback(),
              () => callback(),
            ),
          (err: Error) => callback(err),
        );
      });
    },
  });
  return new Promise((resolve, reject) => {
    server.once('error', reject);
    server.listen(port, '127.0.0.1', () => {
      const addr = server.server.address();
      resolve({
        port: typeof addr === 'object' && addr ? addr.port : port,
        dir,
        close: () => new Promise<void>((r) => server.close(() => r())),
      });
    });
  });
}

export interface StoredMail {
  id: string;
  receivedAt: string;
  to: string;
  subject: string;
  text: string;
}

function header(raw: string, name: string): string {
  const m = raw.match(new RegExp(`^${name}:\\s*(.*(?:\\r?\\n[ \\t].*)*)`, 'im'));
  return m ? m[1].replace(/\r?\n[ \t]+/g, ' ').trim() : '';
}

/** The newest messages in the sink, parsed just enough to read them. */
export function readSink(dir: string, limit = 50): StoredMail[] {
  if (!fs.existsSync(dir)) return [];
  return fs
    .readdirSync(dir)
    .filter((f) => f.endsWith('.eml'))
    .sort()
    .reverse()
    .slice(0, limit)
    .map((f) => {
      const raw = fs.readFileSync(path.join(dir, f), 'utf8');
      const split = raw.search(/\r?\n\r?\n/);
      let text = split >= 0 ? raw.slice(split).trim() : '';
      if (/quoted-printable/i.test(header(raw, 'Content-Transfer-Encoding'))) {
        text = text.replace(/=\r?\n/g, '').replace(/=([0-9A-F]{2})/g, (_, h) => String.fromCharCode(parseInt(h, 16)));
      }
      return { id: f.replace(/\.eml$/, ''), receivedAt: fs.statSync(path.join(dir, f)).mtime.toISOString(), to: header(raw, 'To'), subject: header(raw, 'Subject'), text };
    });
}
