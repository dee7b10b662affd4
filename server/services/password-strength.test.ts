import { describe, expect, it } from 'vitest';
import { newPasswordProblem } from './auth.service';
import { MIN_PASSWORD_SCORE, passwordStrength } from './password-strength';

// zxcvbn's scores (D. L. Wheeler, "zxcvbn: Low-Budget Password Strength Estimation", USENIX Security
// 2016, and the zxcvbn README; thresholds from memory): 0 under 10^3 estimated guesses, 1 under 10^6,
// 2 under 10^8, 3 under 10^10, 4 from 10^10, as implemented by @zxcvbn-ts/core. The product refuses below 3.
describe('password strength by the estimator', () => {
  it('refuses common passwords, keyboard walks, product words and the email name', () => {
    for (const p of ['password1234', 'qwertyuiop', '1q2w3e4r5t', 'stillpoint-demo', 'Tr4nsmitter!', 'calibration2026']) {
      expect(passwordStrength(p, 'rowan@example.test').score, p).toBeLessThan(MIN_PASSWORD_SCORE);
      expect(newPasswordProblem(p, 'rowan@example.test'), p).toMatch(/too easy to guess/);
    }
    expect(newPasswordProblem('rowan-is-here-2026', 'rowan@example.test')).toMatch(/name part of the email/);
    expect(newPasswordProblem('password1234', 'x@example.test')).toMatch(/common/);
  });

  it('accepts passphrases of unrelated words', () => {
    for (const p of ['violet-harbour-71', 'copper-kestrel-7719', 'correct horse battery staple']) {
      expect(passwordStrength(p, 'rowan@example.test').score, p).toBeGreaterThanOrEqual(MIN_PASSWORD_SCORE);
      expect(newPasswordProblem(p, 'rowan@example.test'), p).toBeUndefined();
    }
  });

  it('answers quickly for a very long input (only the first 100 characters are estimated)', () => {
    const r = passwordStrength('a'.repeat(50_000) + 'zq');
    expect(r.score).toBeLessThan(MIN_PASSWORD_SCORE);
  });
});
