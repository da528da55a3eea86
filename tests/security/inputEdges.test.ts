/**
 * Input edges of issue 13 that need no server: the address to go to after signing in,
 * text that PostgreSQL cannot store, and which address counts as the client's.
 */
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { resolveClientAddress } from '@/lib/server/forwarded';
import { parseBody, parseQuery } from '@/lib/server/http';
import { field, safeNext } from '@/lib/server/pageHelpers';

describe('the address to go to after signing in', () => {
  it.each([
    ['/\t/evil.example'],
    ['/\n/evil.example'],
    ['/\r\n/evil.example'],
    ['//evil.example'],
    ['/\\evil.example'],
    ['\\\\evil.example'],
    ['https://evil.example/'],
    ['javascript:alert(1)'],
    [' /profile'],
    [''],
  ])('sends %j home', (next) => {
    expect(safeNext(next)).toBe('/');
  });

  it('keeps a same-origin path with its query and fragment', () => {
    expect(safeNext('/initiatives/ward-7?tab=runs#latest')).toBe('/initiatives/ward-7?tab=runs#latest');
    expect(safeNext('/profile')).toBe('/profile');
  });
});

describe('text PostgreSQL cannot store', () => {
  const Body = z.object({ note: z.string(), tags: z.array(z.string()).optional() });
  const request = (text: string) => new Request('http://127.0.0.1/', { method: 'POST', body: text, headers: { 'Content-Type': 'application/json' } });

  it.each([
    ['a NUL', '{"note":"before\\u0000after"}', 'note'],
    ['a bell', '{"note":"ring\\u0007"}', 'note'],
    ['a lone high surrogate', '{"note":"broken \\ud800 text"}', 'note'],
    ['a lone low surrogate', '{"note":"ok","tags":["fine","\\udc00"]}', 'tags.1'],
  ])('refuses %s with a 400 naming the field', async (_what, body, path) => {
    await expect(parseBody(request(body), Body)).rejects.toMatchObject({
      status: 400,
      code: 'validation-failed',
      details: [expect.objectContaining({ path })],
    });
  });

  it('accepts tabs, line breaks and paired surrogates', async () => {
    const note = 'line one\r\nline two\tindented 😀';
    expect(await parseBody(request(JSON.stringify({ note })), Body)).toEqual({ note });
  });

  it('refuses a control character in a query parameter or a form field', () => {
    expect(() => parseQuery(new URL('http://127.0.0.1/?q=a%00b'), z.object({ q: z.string() }))).toThrow(
      expect.objectContaining({ status: 400, details: [expect.objectContaining({ path: 'q' })] }),
    );
    const form = new FormData();
    form.set('email', 'someone@test.example\u0000');
    expect(() => field(form, 'email')).toThrow(expect.objectContaining({ status: 400, details: [expect.objectContaining({ path: 'email' })] }));
  });
});

describe('the client address', () => {
  it('ignores X-Forwarded-For from a peer that is not a trusted proxy', () => {
    expect(resolveClientAddress('198.51.100.7', '203.0.113.99', [])).toBe('198.51.100.7');
    expect(resolveClientAddress('::ffff:198.51.100.7', '203.0.113.99', ['10.0.0.2'])).toBe('198.51.100.7');
  });

  it('believes a trusted proxy, taking the right-most address it did not add itself', () => {
    expect(resolveClientAddress('10.0.0.2', '203.0.113.99', ['10.0.0.2'])).toBe('203.0.113.99');
    // The client forged the first entry; the proxy appended the real one.
    expect(resolveClientAddress('::ffff:10.0.0.2', '1.2.3.4, 203.0.113.99', ['10.0.0.2'])).toBe('203.0.113.99');
    expect(resolveClientAddress('10.0.0.2', '203.0.113.99, 10.0.0.3', ['10.0.0.2', '10.0.0.3'])).toBe('203.0.113.99');
    expect(resolveClientAddress('10.0.0.2', null, ['10.0.0.2'])).toBe('10.0.0.2');
  });
});
