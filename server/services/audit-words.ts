/**
 * The audit trail in words: what each action means to a reader, so the trail reads "Checklist
 * changed on FT-101 by Ana Reyes" rather than a slug and an id. The stored rows keep their slugs
 * (they are hashed into the chain); the words are added on the way out.
 */
const ACTION_WORDS: Record<string, string> = {
  'auth.signed-in': 'Signed in',
  'auth.signed-out': 'Signed out',
  'auth.sign-in-failed': 'Sign-in refused',
  'auth.account-locked': 'Account locked after failed sign-ins',
  'auth.reentry-locked': 'Password re-entry locked',
  'auth.password-changed': 'Password changed',
  'auth.password-change-failed': 'Password change refused',
  'user.invited': 'User invited',
  'user.changed': 'User changed',
  'user.password-reset': 'Password reset by an admin',
  'user.unlocked': 'Account unlocked',
  'instrument.created': 'Instrument added to the register',
  'instrument.changed': 'Instrument changed',
  'instrument.corrected-from-device': 'Register corrected to the HART device',
  'instrument.interval-changed': 'Calibration interval changed',
  'instrument.calibration-recorded': 'Calibration date recorded',
  'instruments.imported': 'Instruments imported',
  'standard.created': 'Standard added to the register',
  'standard.changed': 'Standard changed',
  'standard.certificate-attached': 'Certificate attached',
  'standards.imported': 'Standards imported',
  'file.attached': 'File uploaded',
  'file.removed': 'File removed',
  'job.created': 'Job created',
  'job.assigned': 'Job assigned',
  'job.checklist-changed': 'Checklist changed',
  'job.hart-read': 'HART device read (identity and configuration)',
  'job.hart-register-corrected': 'HART disagreement resolved: register corrected',
  'job.hart-recorded-as-found': 'HART device recorded as found',
  'job.hart-write': 'Command sent to the HART device',
  'job.submitted': 'Submitted for review',
  'job.returned': 'Returned with comments',
  'job.approved': 'Approved',
  'job.revision-opened': 'Correction opened (new revision)',
  'job.record-frozen': 'Record frozen',
  'signature.applied': 'Signed',
  'signature.failed': 'Signature refused: wrong password',
  'signature.refused': 'Signature refused',
  'run.started': 'Run started',
  'run.changed': 'Run state changed',
  'run.warned': 'Run warning',
  'run.clock-flagged': 'Clock difference flagged',
  'run.point-captured': 'Point captured hands-free',
  'run.point-captured-manually': 'Point captured by hand',
  'run.point-redone': 'Point set for a redo',
  'bench.registered': 'Bench registered',
  'bench.revoked': 'Bench revoked',
  'storage.acknowledged': 'Stored samples acknowledged',
  'site.seeded': 'Demo site created',
  'demo.history-seeded': 'Demo history written',
};

/** "job.checklist-changed" → "Checklist changed" (known actions), else the slug's words. */
export function actionWords(action: string): string {
  const known = ACTION_WORDS[action];
  if (known) return known;
  const [, rest = action] = action.split('.', 2);
  const words = rest.replace(/[-_.]+/g, ' ').trim();
  return words.charAt(0).toUpperCase() + words.slice(1);
}

/** A point index as people count it (the first point is point 1). */
function pointWords(after: unknown): string {
  const i = (after as { index?: unknown } | null)?.index;
  return typeof i === 'number' ? ` (point ${i + 1})` : '';
}

/** One line: what happened, with the point where it concerns one. */
export function summaryOf(action: string, after: unknown): string {
  return actionWords(action) + (action.startsWith('run.point-') ? pointWords(after) : '');
}
