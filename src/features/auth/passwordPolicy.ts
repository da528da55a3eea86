/**
 * Password rules (OWASP ASVS 5.0 password guidance, stricter on length): at least 12
 * characters, at most 128, not one of the commonly breached passwords, not the e-mail
 * address, not a single repeated character. The common-password list is the one the
 * @zxcvbn-ts/language-common package ships (about 49,000 entries), bundled with the app.
 */
import { dictionary } from '@zxcvbn-ts/language-common';

export const PASSWORD_MIN_LENGTH = 12;
export const PASSWORD_MAX_LENGTH = 128;

const common = new Set((dictionary['passwords-common'] as string[]).map((p) => p.toLowerCase()));

/** The reason a password is refused, or null when it is acceptable. */
export function passwordProblem(password: string, email?: string): string | null {
  const length = [...password].length;
  if (length < PASSWORD_MIN_LENGTH) return `Use at least ${PASSWORD_MIN_LENGTH} characters.`;
  if (length > PASSWORD_MAX_LENGTH) return `Use at most ${PASSWORD_MAX_LENGTH} characters.`;
  const lowered = password.toLowerCase();
  if (common.has(lowered)) return 'That password is on the list of commonly used passwords. Choose another.';
  if (/^(.)\1*$/su.test(password)) return 'A password of one repeated character is too easy to guess.';
  if (email) {
    const local = email.toLowerCase().split('@')[0];
    if (lowered === email.toLowerCase() || (local.length >= 4 && lowered.includes(local))) {
      return 'A password must not contain your e-mail address.';
    }
  }
  return null;
}
