/**
 * What an error looks like to a client: a known failure keeps its code and words; any
 * other error (here one shaped like a PostgreSQL error) is logged with its stack and
 * answered with a generic message and the request id, never its own message.
 */
import { describe, expect, it, vi } from 'vitest';
import { AppError, ERROR_CODE } from './errors';
import { errorResponse } from './http';
import { logger } from './logger';

describe('errorResponse', () => {
  it('answers a known failure with its status, code and message', async () => {
    const response = errorResponse(new AppError(409, 'conflict', 'The pinned extract version is not confirmed.'), 'req-1');
    expect(response.status).toBe(409);
    expect(await response.json()).toEqual({ error: { code: 'conflict', message: 'The pinned extract version is not confirmed.', requestId: 'req-1' } });
  });

  it('logs an unknown error with its stack and shows only a generic message with the request id', async () => {
    const logged = vi.spyOn(logger, 'error').mockImplementation(() => undefined);
    const raw = Object.assign(new Error('duplicate key value violates unique constraint "runs_pkey"'), { code: '23505' });
    const response = errorResponse(raw, 'req-2');
    expect(response.status).toBe(500);
    const body = (await response.json()) as { error: { code: string; message: string; requestId: string } };
    expect(body.error.code).toBe('internal-error');
    expect(body.error.requestId).toBe('req-2');
    expect(body.error.message).toContain('req-2');
    expect(JSON.stringify(body)).not.toMatch(/duplicate|runs_pkey|23505|stack/);
    expect(logged).toHaveBeenCalledWith(expect.objectContaining({ err: raw, requestId: 'req-2' }), 'unhandled error');
    logged.mockRestore();
  });

  it('turns a validation failure into the vocabulary’s kebab-case code', async () => {
    const { z } = await import('zod');
    const parsed = z.object({ title: z.string() }).safeParse({});
    expect(parsed.success).toBe(false);
    const response = errorResponse(parsed.error, 'req-3');
    const body = (await response.json()) as { error: { code: string } };
    expect(response.status).toBe(400);
    expect(body.error.code).toMatch(ERROR_CODE);
  });
});
