import { instrumentRepository, standardRepository } from '../../server/db/repositories/register.repository';
import { recordCompletedRun } from '../../server/demo/demo-history';
import { ApiClient, demoEmail, type TestServer } from '../helpers/test-server';
import { useTestServer } from '../helpers/use-test-server';

/** In-date pressure module and bench multimeter of the demo site (both cover the demo's DP tags). */
export async function demoStandards(srv: TestServer) {
  const repo = standardRepository(srv.database.db);
  return { pressure: (await repo.findBySerial('QDU-PC-0417'))!, current: (await repo.findBySerial('QDU-MM-0031'))! };
}

/** The technician completes the checklist of a job (standards, permit, acknowledgements, return to service). */
export async function completeChecklist(tech: ApiClient, jobId: string, standardIds: string[]) {
  const a = await tech.req('PUT', `/api/jobs/${jobId}/checklist`, { standardIds, permitNo: 'PTW-T-0099', bypass: { required: false, description: '' } });
  if (a.status !== 200) throw new Error(`checklist: ${a.status} ${JSON.stringify(a.body)}`);
  const b = await tech.req('PUT', `/api/jobs/${jobId}/checklist`, { operatorsInformed: true, isolated: true, vented: true, returnedToService: true });
  if (b.status !== 200) throw new Error(`checklist: ${b.status} ${JSON.stringify(b.body)}`);
}

/** A finished as-found run with small errors (a pass), written straight to the database. */
export async function passingAsFound(srv: TestServer, jobId: string, tag: string, startedBy: string, opts: { trace?: boolean } = {}) {
  const instrument = (await instrumentRepository(srv.database.db).findByTag(tag))!;
  const s = await demoStandards(srv);
  return recordCompletedRun(srv.database.db, {
    jobId,
    kind: 'as-found',
    instrument,
    pressureStandard: s.pressure,
    currentStandard: s.current,
    errorsPctSpan: [0.02, 0.03, -0.01, 0.02, 0.04, 0.03, 0.0, 0.01, 0.02],
    startedAt: new Date(Date.now() - 3 * 3600_000),
    startedBy,
    ...(opts.trace ? { trace: { hz: 10, seqBase: 2_000_000_000_000 + Math.floor(Math.random() * 1e9) } } : {}),
  });
}

/** Boots the app before the calling file's tests and signs in the lead and the technician; closes it after them. */
export function useLeadAndTech() {
  return useTestServer(async (srv) => {
    const lead = new ApiClient(srv.url);
    const tech = new ApiClient(srv.url);
    await lead.login(demoEmail('lead'));
    await tech.login(demoEmail('tech'));
    return { lead, tech };
  });
}
