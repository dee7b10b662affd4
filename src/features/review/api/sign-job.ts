import { useMutation, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { JobDetailSchema } from '../../../../shared/schemas/jobs';
import { RevisionSchema, SignatureSchema, type ReviewBody, type RevisionBody } from '../../../../shared/schemas/records';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

const SignReplySchema = z.object({ job: JobDetailSchema, signature: SignatureSchema });

/** POST /api/jobs/:id/review → the job and the signature as stored. A wrong password answers 401. */
export function signJob(jobId: string, body: ReviewBody) {
  return api.post(`/api/jobs/${encodeURIComponent(jobId)}/review`, body, { schema: SignReplySchema });
}

export function useSignJob(jobId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: ReviewBody) => signJob(jobId, body),
    onSettled: () => qc.invalidateQueries({ queryKey: queryKeys.jobs }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.records }),
  });
}

/** POST /api/jobs/:id/revisions → the job reopened at revision + 1. */
export function openRevision(jobId: string, body: RevisionBody) {
  return api.post(`/api/jobs/${encodeURIComponent(jobId)}/revisions`, body, { schema: JobDetailSchema });
}

export function useOpenRevision(jobId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: RevisionBody) => openRevision(jobId, body),
    onSuccess: () => Promise.all([qc.invalidateQueries({ queryKey: queryKeys.jobs }), qc.invalidateQueries({ queryKey: queryKeys.records })]),
  });
}

/** GET /api/jobs/:id/revisions/:revision → a superseded revision as it stood. */
export function getRevision(jobId: string, revision: number, signal?: AbortSignal) {
  return api.get(`/api/jobs/${encodeURIComponent(jobId)}/revisions/${revision}`, { schema: RevisionSchema, ...(signal ? { signal } : {}) });
}
