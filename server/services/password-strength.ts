/**
 * Password strength by a maintained estimator, `@zxcvbn-ts/core` (zxcvbn: pattern matching against
 * common-password, name and word dictionaries, keyboard walks, dates and repeats, with a guess
 * estimate), in place of a short word list. NIST SP 800-63B §5.1.1.2 asks that new passwords be
 * compared against commonly used, expected or compromised values; the estimator's dictionaries do
 * that, and the account's own email name and the product's words are added as user inputs.
 */
import { ZxcvbnFactory, type ZxcvbnResult } from '@zxcvbn-ts/core';
import { adjacencyGraphs, dictionary as commonDictionary } from '@zxcvbn-ts/language-common';
import { dictionary as enDictionary, translations } from '@zxcvbn-ts/language-en';

/**
 * Lowest accepted score. zxcvbn documents score 3 as "safely unguessable: moderate protection from
 * an offline slow-hash scenario" (at least 10^8 estimated guesses; 2 is "somewhat guessable", under
 * 10^8; thresholds from the zxcvbn README, from memory). Passwords are stored with bcrypt, a slow
 * hash, so 3 is the product's threshold (product choice).
 */
export const MIN_PASSWORD_SCORE = 3;

/** Words of this product and trade that a password should not lean on. */
const PRODUCT_WORDS = ['stillpoint', 'calibration', 'calibrate', 'instrument', 'transmitter', 'pressure', 'technician', 'bench', 'orifice'];

let factory: ZxcvbnFactory | undefined;
/** Built on first use: the dictionaries take a moment to load. */
function estimator(): ZxcvbnFactory {
  factory ??= new ZxcvbnFactory({ translations, graphs: adjacencyGraphs, dictionary: { ...commonDictionary, ...enDictionary } });
  return factory;
}

export interface PasswordStrength {
  /** 0 (too guessable) to 4 (very unguessable). */
  score: ZxcvbnResult['score'];
  /** log10 of the estimated guesses. */
  guessesLog10: number;
  /** The estimator's warning, in words, or null. */
  warning: string | null;
  suggestions: string[];
}

/** The strength of `password` for the account `email` (its name part is a user input). */
export function passwordStrength(password: string, email = ''): PasswordStrength {
  const name = email.split('@')[0] ?? '';
  const inputs = [...PRODUCT_WORDS, ...(name ? [name, ...name.split(/[._+-]+/).filter((x) => x.length >= 3)] : [])];
  // The estimator's cost grows with length; beyond 100 characters the rest adds nothing to refuse.
  const r = estimator().check(password.slice(0, 100), inputs);
  return { score: r.score, guessesLog10: r.guessesLog10, warning: r.feedback.warning || null, suggestions: r.feedback.suggestions };
}
