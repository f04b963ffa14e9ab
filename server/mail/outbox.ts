/**
 * The Outbox: every message the local mail sink receives is parsed with
 * mailparser and kept in `mail_messages` (sender, recipients, subject, plain
 * text, the links found in it, received time) so admins can list and read
 * them (GET /api/admin/mail, /admin/outbox). The .eml files stay in the sink's
 * private folder (0700/0600); on boot any file not yet in the table (older
 * versions, or a store that failed) is imported.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { AddressObject } from 'mailparser';
import { MailMessage } from '../models/notification';
import { logger } from '../logger';
import { notFound } from '../errors';
import type { ReceivedMail } from './sink';
import type { FileStore } from '../storage/fileStore';
import type { OutboxMessage, OutboxPage, OutboxSummary } from '../../shared/schemas/notifications';

/** http(s) links in plain text, without trailing punctuation of the sentence around them. */
export function linksIn(text: string): string[] {
  const found = text.match(/https?:\/\/[^\s<>"'`]+/g) ?? [];
  return [...new Set(found.map((l) => l.replace(/[.,;:!?)\]]+$/, '')))];
}

function addresses(a: AddressObject | AddressObject[] | undefined): string[] {
  const list = Array.isArray(a) ? a : a ? [a] : [];
  return list.flatMap((o) => o.value.map((v) => (v.address ?? '').toLowerCase()).filter(Boolean));
}

/** Parse one raw message and store it (once per sink file). */
export async function storeReceivedMail(m: ReceivedMail, receivedAt = new Date()): Promise<void> {
  const { simpleParser } = await import('mailparser'); // loaded on the first message, not at boot
  const parsed = await simpleParser(m.raw, { skipHtmlToText: false, skipTextLinks: true });
  const text = (parsed.text ?? '').slice(0, 200_000);
  const envelope = m.envelopeTo.map((r) => r.toLowerCase());
  const recipients = [...new Set(envelope.length ? envelope : [...addresses(parsed.to), ...addresses(parsed.cc)])];
  await MailMessage.findOrCreate({
    where: { file: m.file },
    defaults: {
      file: m.file,
      messageId: parsed.messageId?.slice(0, 300) ?? null,
      sender: (parsed.from?.text ?? '').slice(0, 400),
      recipients,
      subject: (parsed.subject ?? '').slice(0, 400),
      text,
      links: linksIn(text),
      receivedAt,
    },
  });
}

/** The sink's hook: store, and log (never throw) when it fails — the file is kept either way. */
export async function onSinkMessage(m: ReceivedMail): Promise<void> {
  try {
    await storeReceivedMail(m);
  } catch (err) {
    logger.warn({ err, file: m.file }, 'a received mail could not be added to the Outbox');
  }
}

async function readAll(stream: NodeJS.ReadableStream): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const c of stream) chunks.push(c as Buffer);
  return Buffer.concat(chunks);
}

/**
 * Import sink files that are not in the Outbox yet (received time: the
 * file's): from a folder, or from the file store's `mail/` (where the sink
 * keeps them when it has a store).
 */
export async function importSinkBacklog(from: string | FileStore): Promise<number> {
  const listed =
    typeof from === 'string'
      ? fs.existsSync(from)
        ? fs.readdirSync(from).map((f) => ({ name: f, modifiedAt: () => fs.statSync(path.join(from, f)).mtime }))
        : []
      : (await from.list('mail')).map((e) => ({ name: e.name, modifiedAt: () => e.modifiedAt }));
  const entries = listed.filter((e) => e.name.endsWith('.eml'));
  const files = entries.map((e) => e.name);
  if (!files.length) return 0;
  const known = new Set((await MailMessage.findAll({ attributes: ['file'], where: { file: files } })).map((r) => r.file));
  let n = 0;
  for (const { name: file, modifiedAt } of entries) {
    if (known.has(file)) continue;
    try {
      let raw: Buffer;
      if (typeof from === 'string') raw = fs.readFileSync(path.join(from, file));
      else {
        const obj = await from.get(`mail/${file}`);
        if (!obj) continue; // removed meanwhile
        raw = await readAll(obj.stream);
      }
      await storeReceivedMail({ file, raw, envelopeTo: [] }, modifiedAt());
      n++;
    } catch (err) {
      logger.warn({ err, file }, 'a mail file could not be imported into the Outbox');
    }
  }
  return n;
}

const excerptOf = (text: string) => {
  const line = text.split(/\r?\n/).map((l) => l.trim()).find((l) => l.length > 0) ?? '';
  return line.length > 140 ? `${line.slice(0, 139)}…` : line;
};

function summary(m: MailMessage): OutboxSummary {
  return { id: m.id, sender: m.sender, recipients: m.recipients, subject: m.subject, receivedAt: m.receivedAt.toISOString(), excerpt: excerptOf(m.text) };
}

/** Newest first. */
export async function listOutbox(q: { page: number; pageSize: number }): Promise<OutboxPage> {
  const { rows, count } = await MailMessage.findAndCountAll({
    order: [['receivedAt', 'DESC'], ['id', 'DESC']],
    limit: q.pageSize,
    offset: (q.page - 1) * q.pageSize,
  });
  return { items: rows.map(summary), total: count, page: q.page, pageSize: q.pageSize };
}

export async function readOutboxMessage(id: number): Promise<OutboxMessage> {
  const m = Number.isInteger(id) && id > 0 && id < 2 ** 31 ? await MailMessage.findByPk(id) : null;
  if (!m) throw notFound('Message');
  return { ...summary(m), messageId: m.messageId, text: m.text, links: m.links };
}
