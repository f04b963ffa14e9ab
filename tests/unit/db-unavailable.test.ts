/**
 * Which errors the error handler answers with 503 database_unavailable:
 * Sequelize's connection errors and wrapped node-postgres errors whose
 * SQLSTATE or socket code says the server is unreachable or going away
 * (PostgreSQL manual, Appendix A "PostgreSQL Error Codes"); never a query
 * error, nor a socket error that did not come from the database.
 */
import { describe, expect, it } from 'vitest';
import {
  ConnectionAcquireTimeoutError,
  ConnectionError,
  ConnectionRefusedError,
  DatabaseError,
  HostNotFoundError,
  UniqueConstraintError,
  ValidationError,
} from 'sequelize';
import { errorHandler, isDatabaseUnavailable } from '../../server/middlewares/errors';
import { bytesText } from '../../server/middlewares/body';

const pgError = (code: string | undefined, message = 'x') => Object.assign(new Error(message), code ? { code } : {});
const wrapped = (e: Error) => new DatabaseError(e as never);

describe('isDatabaseUnavailable', () => {
  it('takes the Sequelize connection family', () => {
    expect(isDatabaseUnavailable(new ConnectionRefusedError(pgError('ECONNREFUSED')))).toBe(true);
    expect(isDatabaseUnavailable(new ConnectionAcquireTimeoutError(new Error('Operation timeout')))).toBe(true);
    expect(isDatabaseUnavailable(new HostNotFoundError(pgError('ENOTFOUND')))).toBe(true);
    expect(isDatabaseUnavailable(new ConnectionError(new Error('whatever')))).toBe(true);
  });

  it('takes wrapped server-going-away and connection-exception errors', () => {
    for (const code of ['57P01', '57P02', '57P03', '08006', '08001', '08P01', '53300', 'ECONNRESET'])
      expect(isDatabaseUnavailable(wrapped(pgError(code))), code).toBe(true);
    expect(isDatabaseUnavailable(wrapped(pgError(undefined, 'Connection terminated unexpectedly')))).toBe(true);
  });

  it('leaves query errors and foreign errors alone', () => {
    for (const code of ['22P02', '23505', '40001', '42P01', '22021'])
      expect(isDatabaseUnavailable(wrapped(pgError(code))), code).toBe(false);
    expect(isDatabaseUnavailable(new UniqueConstraintError({}))).toBe(false);
    expect(isDatabaseUnavailable(new ValidationError('bad', []))).toBe(false);
    expect(isDatabaseUnavailable(pgError('ECONNREFUSED'))).toBe(false); // e.g. the mail server: not the database
    expect(isDatabaseUnavailable(new Error('Connection terminated unexpectedly'))).toBe(false);
    expect(isDatabaseUnavailable(null)).toBe(false);
  });
});

describe('bytesText (the limit named in 413 answers)', () => {
  it('names limits in binary multiples', () => {
    expect(bytesText(1024 * 1024)).toBe('1 MB');
    expect(bytesText(20 * 1024 * 1024)).toBe('20 MB');
    expect(bytesText(16 * 1024)).toBe('16 KB');
    expect(bytesText(1536 * 1024)).toBe('1.5 MB');
    expect(bytesText(900)).toBe('900 bytes');
  });
});

describe('a unique constraint met by a racing insert', () => {
  it('answers 409 already_exists, not 500 (SQLSTATE 23505, PostgreSQL manual, Appendix A)', () => {
    let status = 0;
    let body: unknown = null;
    const res = { headersSent: false, set: () => res, status: (s: number) => ((status = s), res), json: (b: unknown) => ((body = b), res) };
    errorHandler(new UniqueConstraintError({}), { path: '/api/x' } as never, res as never, () => {});
    expect(status).toBe(409);
    expect(body).toMatchObject({ code: 'already_exists' });
    errorHandler(wrapped(pgError('22P02')), { path: '/api/x' } as never, res as never, () => {}); // any other query error stays a 500
    expect(status).toBe(500);
  });
});
