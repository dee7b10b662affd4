/**
 * Passwords refused outright: a short list of the most common choices and product words.
 * NIST SP 800-63B §5.1.1.2 asks verifiers to compare new passwords against a list of
 * commonly used or compromised values; this list is our own short selection (from memory
 * of widely published top-password lists), not a complete breach corpus.
 */
const COMMON = [
  '123456', '123456789', '12345678', '1234567890', '12345', '1234567', 'password', 'password1', 'password123',
  'qwerty', 'qwerty123', 'qwertyuiop', '111111', '000000', 'abc123', 'iloveyou', 'admin', 'admin123', 'welcome',
  'welcome1', 'letmein', 'monkey', 'dragon', 'football', 'baseball', 'sunshine', 'princess', 'master', 'shadow',
  'superman', 'trustno1', 'passw0rd', 'p@ssw0rd', 'p@ssword', 'changeme', 'secret', 'default', 'login', 'starwars',
  '1q2w3e4r', '1qaz2wsx', 'zaq12wsx', 'aa123456', 'asdfghjkl', 'qwe123', '987654321', '654321', '121212', 'michael',
  'calibration', 'calibrate', 'instrument', 'transmitter', 'pressure', 'stillpoint', 'stillpoint1', 'technician',
  'password12', 'password1234', 'administrator', 'welcome123', 'summer2024', 'winter2024', 'spring2025', 'autumn2025',
];
const SET = new Set(COMMON);

/** True when the password is on the list (case-insensitive), or is one character repeated. */
export function isCommonPassword(password: string): boolean {
  const p = password.toLowerCase();
  if (SET.has(p)) return true;
  if (/^(.)\1+$/.test(p)) return true;
  // A listed word padded with digits or punctuation ("password2024!") is still common.
  const core = p.replace(/[^a-z]/g, '');
  return core.length >= 4 && SET.has(core) && p.length - core.length <= 6;
}
