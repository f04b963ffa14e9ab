/** JSON_MAX_BYTES / JSON_LARGE_MAX_BYTES: defaults, overrides, refusals. */
import { afterEach, describe, expect, it } from 'vitest';
import { loadConfig } from '../../server/config';

const base = { storageDir: '/nonexistent-cayline-test', jwtSecret: 'x' };
afterEach(() => {
  delete process.env.JSON_MAX_BYTES;
  delete process.env.JSON_LARGE_MAX_BYTES;
});

describe('body limits', () => {
  it('default to 1 MB for /api, 20 MB for the large routes and 16 KB for sign-in', () => {
    expect(loadConfig(base).body).toEqual({ jsonMaxBytes: 1024 * 1024, largeJsonMaxBytes: 20 * 1024 * 1024, signInMaxBytes: 16 * 1024 });
  });

  it('take whole byte counts from the environment and refuse anything else', () => {
    process.env.JSON_MAX_BYTES = '65536';
    process.env.JSON_LARGE_MAX_BYTES = ' 5242880 ';
    expect(loadConfig(base).body).toMatchObject({ jsonMaxBytes: 65536, largeJsonMaxBytes: 5242880 });
    for (const bad of ['1mb', '0', '-5', '1.5']) {
      process.env.JSON_MAX_BYTES = bad;
      expect(() => loadConfig(base), bad).toThrow(/JSON_MAX_BYTES/);
    }
  });
});
