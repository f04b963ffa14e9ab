/** The local mail sink keeps messages private to the server's user: files 0600, folder 0700. */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import nodemailer from 'nodemailer';
import { afterEach, describe, expect, it } from 'vitest';
import { readSink, startMailSink, type MailSink } from '../../server/mail/sink';
import { createFileStore } from '../../server/storage/fileStore';
import { startS3Fake } from '../helpers/s3-fake';

let sink: MailSink | null = null;
let dir = '';
afterEach(async () => {
  await sink?.close();
  sink = null;
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

const mode = (p: string) => fs.statSync(p).mode & 0o777;

async function sendOne(port: number, to: string) {
  const transport = nodemailer.createTransport({ host: '127.0.0.1', port, secure: false, ignoreTLS: true });
  await transport.sendMail({ from: 'Cayline <no-reply@cayline.example>', to, subject: 'Your first password', text: 'secret-words' });
}

describe('mail sink', () => {
  it('writes each message readable by its owner only, in a folder only its owner can enter', async () => {
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-sink-'));
    const mailDir = path.join(dir, 'mail');
    sink = await startMailSink(mailDir);
    await sendOne(sink.port, 'new.hand@tessel.example');
    const files = fs.readdirSync(mailDir);
    expect(files).toHaveLength(1); // no temporary file left behind
    expect(files[0]).toMatch(/\.eml$/);
    expect(mode(path.join(mailDir, files[0]))).toBe(0o600);
    expect(mode(mailDir)).toBe(0o700);
    expect(readSink(mailDir)[0]).toMatchObject({ to: 'new.hand@tessel.example', subject: 'Your first password' });
  });

  it('hands each kept message to its hook before answering, and keeps the file when the hook fails', async () => {
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-sink-'));
    const mailDir = path.join(dir, 'mail');
    const seen: { file: string; envelopeTo: string[]; raw: string }[] = [];
    let fail = false;
    sink = await startMailSink(mailDir, 0, async (m) => {
      if (fail) throw new Error('store failed');
      seen.push({ file: m.file, envelopeTo: m.envelopeTo, raw: m.raw.toString('utf8') });
    });
    await sendOne(sink.port, 'new.hand@tessel.example');
    // sendMail resolved: the hook has already run
    expect(seen).toHaveLength(1);
    expect(seen[0].envelopeTo).toEqual(['new.hand@tessel.example']);
    expect(seen[0].raw).toContain('Subject: Your first password');
    expect(fs.readdirSync(mailDir)).toEqual([seen[0].file]);
    fail = true;
    await sendOne(sink.port, 'other.hand@tessel.example'); // accepted all the same
    expect(fs.readdirSync(mailDir).filter((f) => f.endsWith('.eml'))).toHaveLength(2);
  });

  it('tightens a folder and messages left open by an earlier version', async () => {
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-sink-'));
    const mailDir = path.join(dir, 'mail');
    fs.mkdirSync(mailDir, { mode: 0o755 });
    fs.chmodSync(mailDir, 0o755);
    const old = path.join(mailDir, '2024-01-01T00-00-00-000Z-00000000.eml');
    fs.writeFileSync(old, 'To: a@tessel.example\r\nSubject: old\r\n\r\nbody');
    fs.chmodSync(old, 0o644);
    sink = await startMailSink(mailDir);
    expect(mode(mailDir)).toBe(0o700);
    expect(mode(old)).toBe(0o600);
  });

  it('keeps messages through the file store: private files with the local driver, objects in the bucket with S3', async () => {
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-sink-'));
    const mailDir = path.join(dir, 'mail');
    const local = createFileStore(dir, { driver: 'local' });
    sink = await startMailSink(mailDir, 0, undefined, local);
    await sendOne(sink.port, 'new.hand@tessel.example');
    const files = fs.readdirSync(mailDir);
    expect(files).toHaveLength(1); // no temporary file left behind
    expect(mode(path.join(mailDir, files[0]))).toBe(0o600);
    expect(mode(mailDir)).toBe(0o700);
    expect((await local.list('mail')).map((e) => e.name)).toEqual(files);
    await sink.close();

    const fake = await startS3Fake();
    try {
      const s3 = createFileStore(dir, fake.settings);
      sink = await startMailSink(path.join(dir, 'mail-s3'), 0, undefined, s3);
      await sendOne(sink.port, 'other.hand@tessel.example');
      const kept = await s3.list('mail');
      expect(kept).toHaveLength(1);
      expect(fs.readdirSync(path.join(dir, 'mail-s3'))).toEqual([]); // nothing on this machine's disk
      const obj = await s3.get(`mail/${kept[0].name}`);
      const chunks: Buffer[] = [];
      for await (const c of obj!.stream) chunks.push(c as Buffer);
      expect(Buffer.concat(chunks).toString('utf8')).toContain('To: other.hand@tessel.example');
    } finally {
      await sink?.close();
      sink = null;
      await fake.close();
    }
  });
});
