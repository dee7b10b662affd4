import type { Role } from '../../shared/schemas/auth';

/**
 * The one server-side policy table (DESIGN.md §2): every route and every WebSocket
 * message names an action here; `'signed-in'` means any role.
 */
export const POLICY = {
  'auth.self': 'signed-in',
  'users.manage': ['admin'],
  'registers.read': 'signed-in',
  'registers.write': ['lead', 'admin'],
  'jobs.read': 'signed-in',
  'jobs.plan': ['lead'],
  'jobs.perform': ['technician'],
  'jobs.review': ['lead'],
  'runs.read': 'signed-in',
  'calc.evaluate': 'signed-in',
  'calc.intervals': 'signed-in',
  'calc.orifice': 'signed-in',
  'bench.read': 'signed-in',
  'bench.configure': ['admin', 'lead'],
  /** Acknowledge quarantined samples and damaged journal batches after review (health stops failing on them). */
  'storage.acknowledge': ['admin', 'lead'],
  'benches.read': 'signed-in',
  'benches.manage': ['lead', 'admin'],
  'sim.control': ['admin'],
  'audit.read': ['lead', 'admin', 'auditor'],
  'settings.manage': ['admin'],
  'mail.outbox': ['admin'],
  'stream.subscribe': 'signed-in',
} as const satisfies Record<string, 'signed-in' | readonly Role[]>;

export type Action = keyof typeof POLICY;

export function allows(action: Action, role: Role): boolean {
  const rule = POLICY[action];
  return rule === 'signed-in' || (rule as readonly Role[]).includes(role);
}
