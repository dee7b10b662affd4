/**
 * Every HART write command sent for a job, as the record keeps it: the command, the value sent in
 * words, the request and reply frames, the response code, who asked and when; stored with the job
 * (job_hart.writes) and in the audit trail (`job.hart-write`), whether it succeeded or not.
 */
import type { HartWrite } from '../../shared/schemas/hart-job';
import type { HartMasterDriver, HartTransaction } from '../bench/protocols';
import type { AuditService } from './audit.service';
import type { SessionUser } from './auth.service';

export interface HartWriteLog {
  /** Runs `send` (one write command on `driver`), keeping the write it made. */
  write<T>(jobId: string, actor: SessionUser, step: string | null, value: string | null, send: () => Promise<T>): Promise<T>;
}

export function createHartWriteLog(o: { driver: () => HartMasterDriver | undefined; audit: AuditService; append(jobId: string, w: HartWrite): Promise<void> }): HartWriteLog {
  return {
    async write(jobId, actor, step, value, send) {
      const driver = o.driver();
      const seen: HartTransaction[] = [];
      // Writes, and command 40, which moves the loop though it changes no configuration (the background reads are not kept).
      const listen = (t: HartTransaction) => (t.writes || t.command === 40) && seen.push(t);
      driver?.on('transaction.completed', listen);
      try {
        return await send();
      } finally {
        driver?.off('transaction.completed', listen);
        for (const t of seen) {
          const w: HartWrite = {
            command: t.command,
            name: t.name,
            value,
            request: t.request,
            reply: t.reply ?? null,
            responseCode: t.responseCode ?? null,
            outcome: t.outcome,
            error: t.error?.message ?? null,
            at: new Date(t.at).toISOString(),
            by: actor.id,
            byName: actor.name,
            step,
          };
          await o.append(jobId, w);
          await o.audit.record(actor, 'job.hart-write', 'job', jobId, undefined, w);
        }
      }
    },
  };
}
