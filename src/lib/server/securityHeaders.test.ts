import { describe, expect, it } from 'vitest';
import { addNonceToScripts, contentSecurityPolicy } from './securityHeaders';

const nonce = '8f14e45fceea167a5a36dedd4bea2543';

describe('nonces on inline scripts', () => {
  it('stamps the nonce onto script tags', () => {
    expect(addNonceToScripts('<p>x</p><script>run()</script><script type="module" src="/a.js"></script>', nonce)).toBe(
      `<p>x</p><script nonce=${nonce}>run()</script><script nonce=${nonce} type="module" src="/a.js"></script>`,
    );
  });

  it('never adds a quote, so user text in an attribute cannot be broken out of', () => {
    // Astro escapes quotes but not angle brackets inside attribute values.
    const page = '<input value="&quot;<script>alert(1)</script>"><div title="a<script src=//x.example/y.js>b"></div>';
    const stamped = addNonceToScripts(page, nonce);
    expect(stamped.split('"').length).toBe(page.split('"').length);
    // Each attribute value still runs from its opening quote to its closing quote.
    expect(stamped).toMatch(/^<input value="[^"]*"><div title="[^"]*"><\/div>$/);
  });

  it('refuses a nonce that could carry markup', () => {
    expect(() => addNonceToScripts('<script></script>', 'a"b')).toThrow(/hexadecimal/);
  });

  it('allows inline scripts only by that nonce and forbids plugins, base changes and framing', () => {
    const policy = contentSecurityPolicy(nonce);
    expect(policy).toContain(`script-src 'self' 'nonce-${nonce}'`);
    expect(policy).not.toContain("'unsafe-inline' ;script");
    expect(policy).toContain("object-src 'none'");
    expect(policy).toContain("base-uri 'none'");
    expect(policy).toContain("frame-ancestors 'none'");
  });
});

describe('a page cut for its nonce', () => {
  it('gives the same bytes as stamping the nonce into the page', async () => {
    const { joinWithNonce, splitAtScripts } = await import('./securityHeaders');
    const nonce = 'ab'.repeat(16);
    for (const page of [
      '',
      '<p>no scripts, ünïcödé</p>',
      '<script>a()</script><p>é</p><script type="module" src="/x.js"></script><scripts-list></scripts-list><script\n>b()</script>',
      '<div title="<script x">quoted</div><noscript>n</noscript><script>',
    ]) {
      expect(Buffer.from(joinWithNonce(splitAtScripts(page), nonce)).toString('utf8')).toBe(addNonceToScripts(page, nonce));
    }
    expect(() => joinWithNonce(splitAtScripts('<script>'), 'not-hex')).toThrow();
  });
});
