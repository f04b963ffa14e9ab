/** TRUST_PROXY: unset trusts no proxy; otherwise the values Express's "trust proxy" setting accepts. */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import express from 'express';
import { afterAll, describe, expect, it } from 'vitest';
import { loadConfig, parseTrustProxy } from '../../server/config';

const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-config-'));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

describe('TRUST_PROXY', () => {
  it('trusts nothing when unset or empty', () => {
    const saved = process.env.TRUST_PROXY;
    delete process.env.TRUST_PROXY;
    try {
      expect(loadConfig({ storageDir: dir, jwtSecret: 'x' }).trustProxy).toBe(false);
    } finally {
      if (saved !== undefined) process.env.TRUST_PROXY = saved;
    }
    expect(parseTrustProxy('')).toBe(false);
    expect(parseTrustProxy('  ')).toBe(false);
  });

  it('reads booleans, hop counts and address lists', () => {
    expect(parseTrustProxy('false')).toBe(false);
    expect(parseTrustProxy('true')).toBe(true);
    expect(parseTrustProxy('1')).toBe(1);
    expect(parseTrustProxy('loopback')).toBe('loopback');
    expect(parseTrustProxy(' 10.0.0.0/8, 127.0.0.1 ')).toBe('10.0.0.0/8, 127.0.0.1');
  });

  it('reads the environment variable, and Express accepts the value', () => {
    const saved = process.env.TRUST_PROXY;
    process.env.TRUST_PROXY = 'loopback, 10.0.0.0/8';
    try {
      const value = loadConfig({ storageDir: dir, jwtSecret: 'x' }).trustProxy;
      expect(value).toBe('loopback, 10.0.0.0/8');
      const app = express();
      app.set('trust proxy', value);
      const trust = app.get('trust proxy fn') as (addr: string, i: number) => boolean;
      expect(trust('10.1.2.3', 0)).toBe(true);
      expect(trust('127.0.0.1', 0)).toBe(true);
      expect(trust('203.0.113.5', 0)).toBe(false);
    } finally {
      if (saved === undefined) delete process.env.TRUST_PROXY;
      else process.env.TRUST_PROXY = saved;
    }
  });

  it('refuses a value that is neither a count nor addresses', () => {
    expect(() => parseTrustProxy('-1')).toThrow(/TRUST_PROXY/);
  });
});
