import { describe, expect, it } from 'vitest';
import { PASSWORD_MAX_LENGTH, passwordProblem } from './passwordPolicy';

describe('password rules', () => {
  it('refuses short passwords and accepts long ones up to the maximum', () => {
    expect(passwordProblem('short-pass1')).toMatch(/at least 12/);
    expect(passwordProblem('heron-lantern-ochre')).toBeNull();
    expect(passwordProblem('x'.repeat(PASSWORD_MAX_LENGTH - 1) + 'y')).toBeNull();
    expect(passwordProblem('xy'.repeat(PASSWORD_MAX_LENGTH))).toMatch(/at most 128/);
  });

  it('refuses commonly used passwords whatever their case', () => {
    // "qwerty123456" and "1qaz2wsx3edc" are keyboard patterns in the shipped common list.
    expect(passwordProblem('qwerty123456')).toMatch(/commonly used/);
    expect(passwordProblem('1QAZ2WSX3EDC')).toMatch(/commonly used/);
  });

  it('refuses a repeated character and the e-mail address', () => {
    expect(passwordProblem('aaaaaaaaaaaaaa')).toMatch(/repeated/);
    expect(passwordProblem('ada.marsh-2026!', 'ada.marsh@tern-valley.example')).toMatch(/e-mail/);
  });
});
