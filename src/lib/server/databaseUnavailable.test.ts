/**
 * Which errors read as a database outage (503 `database-unavailable`) and which stay bugs
 * (a logged 500). Codes from PostgreSQL's error-code appendix (class 08, 57P01-57P03)
 * and Node's socket errors.
 */
import { describe, expect, it } from 'vitest';
import { AppError, isDatabaseUnavailable } from './errors';
import { errorResponse } from './http';

const withCode = (message: string, code: string) => Object.assign(new Error(message), { code });
/** The shape Sequelize wraps a driver error in: its own name, the driver error as `parent`. */
const wrapped = (name: string, parent: Error) => Object.assign(new Error(parent.message), { name, parent, original: parent });

describe('a database outage', () => {
  it('is recognised by socket code, SQLSTATE, message and wrapper, through causes', () => {
    expect(isDatabaseUnavailable(withCode('connect ECONNREFUSED 127.0.0.1:5432', 'ECONNREFUSED'))).toBe(true);
    expect(isDatabaseUnavailable(withCode('terminating connection due to administrator command', '57P01'))).toBe(true);
    expect(isDatabaseUnavailable(withCode('the database system is starting up', '57P03'))).toBe(true);
    expect(isDatabaseUnavailable(withCode('connection failure', '08006'))).toBe(true);
    expect(isDatabaseUnavailable(new Error('Connection terminated unexpectedly'))).toBe(true);
    expect(isDatabaseUnavailable(wrapped('SequelizeConnectionRefusedError', withCode('connect ECONNREFUSED', 'ECONNREFUSED')))).toBe(true);
    expect(isDatabaseUnavailable(wrapped('SequelizeDatabaseError', withCode('terminating connection', '57P01')))).toBe(true);
    expect(isDatabaseUnavailable(new Error('outer', { cause: withCode('refused', 'ECONNREFUSED') }))).toBe(true);
  });

  it('is not any other database error', () => {
    expect(isDatabaseUnavailable(wrapped('SequelizeDatabaseError', withCode('syntax error at or near "FROM"', '42601')))).toBe(false);
    expect(isDatabaseUnavailable(withCode('duplicate key value violates unique constraint', '23505'))).toBe(false);
    expect(isDatabaseUnavailable(new AppError(404, 'not-found', 'That record was not found.'))).toBe(false);
    expect(isDatabaseUnavailable('Connection terminated')).toBe(false);
  });

  it('becomes a 503 with the database-unavailable code and a Retry-After', async () => {
    const response = errorResponse(wrapped('SequelizeConnectionRefusedError', withCode('connect ECONNREFUSED', 'ECONNREFUSED')), 'req-1');
    expect(response.status).toBe(503);
    expect(response.headers.get('retry-after')).toBe('5');
    const body = (await response.json()) as { error: { code: string; message: string; requestId: string } };
    expect(body.error.code).toBe('database-unavailable');
    expect(body.error.message).toMatch(/database cannot be reached/);
    expect(body.error.requestId).toBe('req-1');
    expect(errorResponse(withCode('duplicate key', '23505')).status).toBe(500);
  });
});
