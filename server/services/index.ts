import type { Database } from '../db/client';
import { createAuditService } from './audit.service';
import { createAuthService } from './auth.service';
import { createCertificateService } from './certificate.service';
import { createCsvService } from './csv.service';
import { createDriftService } from './drift.service';
import { createJobService, type JobNotice } from './job.service';
import { createRegisterService } from './register.service';
import { createReviewService, type ReviewNotice } from './review.service';
import { createSessionEvents, type SessionEvents } from './session-events';
import { createSiteService } from './site.service';
import { createUserService } from './user.service';

/** Builds every service over one database; the composition root and tests share this. */
export function createServices(database: Database, secret: Uint8Array, hooks: ServiceHooks = {}, sessionEvents: SessionEvents = createSessionEvents(), opts: { hashCost?: number } = {}) {
  const audit = createAuditService(database.db);
  const auth = createAuthService(database.db, secret, audit, { hashCost: opts.hashCost }, sessionEvents);
  const registers = createRegisterService(database.db, audit);
  const jobs = createJobService(database.db, audit, (n) => hooks.onJob?.(n));
  return {
    audit,
    auth,
    users: createUserService(database.db, audit, auth),
    registers,
    jobs,
    review: createReviewService(database.db, { audit, auth, jobs, registers, notify: (n) => hooks.onReview?.(n) }),
    csv: createCsvService(database.db, audit),
    drift: createDriftService(database.db, audit, jobs),
    certificates: createCertificateService(database.db, { jobs, audit }),
    site: createSiteService(database.db, audit),
  };
}

/** Late-bound listeners (mail), set by the composition root after the services exist. */
export interface ServiceHooks {
  onReview?: (notice: ReviewNotice) => void | Promise<void>;
  onJob?: (notice: JobNotice) => void | Promise<void>;
}
export type Services = ReturnType<typeof createServices>;
