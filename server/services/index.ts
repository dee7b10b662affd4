import type { Database } from '../db/client';
import { createAuditService } from './audit.service';
import { createAuthService } from './auth.service';
import { createJobService } from './job.service';
import { createRegisterService } from './register.service';
import { createUserService } from './user.service';

/** Builds every service over one database; the composition root and tests share this. */
export function createServices(database: Database, secret: Uint8Array) {
  const audit = createAuditService(database.db);
  return {
    audit,
    auth: createAuthService(database.db, secret, audit),
    users: createUserService(database.db, audit),
    registers: createRegisterService(database.db, audit),
    jobs: createJobService(database.db, audit),
  };
}
export type Services = ReturnType<typeof createServices>;
