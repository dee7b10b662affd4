import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { AttachmentListSchema, AttachmentSchema, type Attachment } from '../../shared/schemas/files';
import { ApiError, api, apiRequest, toApiError } from './api-client';
import { queryKeys } from './query-keys';

/** What files belong to: a standard's certificates, an instrument's datasheets, a job's as-found photos. */
export type AttachmentTarget = { entity: 'standard' | 'instrument' | 'job'; id: string };

const ROUTES = {
  standard: { list: 'certificates', upload: 'certificate', base: 'standards' },
  instrument: { list: 'datasheets', upload: 'datasheet', base: 'instruments' },
  job: { list: 'photos', upload: 'photos', base: 'jobs' },
} as const;

export const attachmentsKey = (t: AttachmentTarget) => ['attachments', t.entity, t.id] as const;

/** The file itself: `inline` opens a PDF or an image in the browser instead of downloading it. */
export const fileUrl = (fileId: string, inline = true) => `/api/files/${encodeURIComponent(fileId)}${inline ? '?inline=1' : ''}`;

/** GET the files of a target (removed files are not listed). */
export async function listAttachments(t: AttachmentTarget, signal?: AbortSignal): Promise<Attachment[]> {
  const r = ROUTES[t.entity];
  return (await api.get(`/api/${r.base}/${encodeURIComponent(t.id)}/${r.list}`, { schema: AttachmentListSchema, ...(signal ? { signal } : {}) })).items;
}

/** POST one file as multipart form data; the server checks the type and the content (magic bytes). */
export async function uploadAttachment(t: AttachmentTarget, file: File): Promise<Attachment> {
  const r = ROUTES[t.entity];
  const form = new FormData();
  form.append('file', file, file.name);
  let res: Response;
  try {
    res = await fetch(`/api/${r.base}/${encodeURIComponent(t.id)}/${r.upload}`, { method: 'POST', body: form, credentials: 'same-origin', headers: { Accept: 'application/json' } });
  } catch {
    throw new ApiError({ status: 0, code: 'network', message: 'Cannot reach the Stillpoint server. Check the connection and try again.' });
  }
  if (!res.ok) throw await toApiError(res);
  return AttachmentSchema.parse(await res.json());
}

/** DELETE with a reason (kept in the audit trail); refused on a submitted or approved record. */
export function removeAttachment(id: string, reason: string): Promise<unknown> {
  return apiRequest(`/api/attachments/${encodeURIComponent(id)}`, { method: 'DELETE', body: { reason } });
}

export function useAttachments(t: AttachmentTarget | null) {
  return useQuery({
    queryKey: t ? attachmentsKey(t) : ['attachments', 'none'],
    queryFn: ({ signal }) => listAttachments(t!, signal),
    enabled: !!t,
  });
}

/** Upload and remove, refreshing the list and what shows the file (the register, the job, the review). */
export function useAttachmentActions(t: AttachmentTarget) {
  const qc = useQueryClient();
  const refresh = () =>
    Promise.all([
      qc.invalidateQueries({ queryKey: attachmentsKey(t) }),
      t.entity === 'standard' ? qc.invalidateQueries({ queryKey: queryKeys.standards }) : undefined,
      t.entity === 'standard' || t.entity === 'job' ? qc.invalidateQueries({ queryKey: queryKeys.jobs }) : undefined,
    ]);
  const upload = useMutation({ mutationFn: (file: File) => uploadAttachment(t, file), onSuccess: refresh });
  const remove = useMutation({ mutationFn: ({ id, reason }: { id: string; reason: string }) => removeAttachment(id, reason), onSuccess: refresh });
  return { upload, remove };
}
