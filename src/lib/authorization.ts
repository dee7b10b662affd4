import type { Role } from '../../shared/schemas/auth';

/**
 * What each role may open. The server enforces every route; the client only hides what the
 * server would refuse (DESIGN.md §2).
 */
export const AREAS = ['queue', 'instruments', 'standards', 'bench', 'records', 'review', 'audit', 'users', 'outbox'] as const;
export type Area = (typeof AREAS)[number];

const ALL: readonly Role[] = ['technician', 'lead', 'admin', 'auditor'];

export const AREA_ROLES: Record<Area, readonly Role[]> = {
  queue: ALL,
  instruments: ALL,
  standards: ALL,
  bench: ALL,
  records: ALL,
  /** The review inbox: jobs awaiting a lead's sign-off. */
  review: ['lead'],
  audit: ['lead', 'admin', 'auditor'],
  users: ['admin'],
  outbox: ['admin'],
};

export function canOpen(role: Role, area: Area): boolean {
  return AREA_ROLES[area].includes(role);
}

/** Registers (instruments, standards) are written by leads and admins only. */
export function canEditRegisters(role: Role): boolean {
  return role === 'lead' || role === 'admin';
}

export const ROLE_LABELS: Record<Role, string> = {
  technician: 'Technician',
  lead: 'Lead',
  admin: 'Admin',
  auditor: 'Auditor',
};
