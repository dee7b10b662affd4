import { useId, useRef, useState } from 'react';
import type { Attachment } from '../../../shared/schemas/files';
import { isApiError } from '../../lib/api-client';
import { fileUrl, useAttachmentActions, useAttachments, type AttachmentTarget } from '../../lib/attachments';
import { formatDate } from '../../lib/format';
import { Button } from './button';
import { Dialog } from './dialog';
import { toast } from './toast';

/** What a file list takes, in words and types. */
export interface AttachmentKindSpec {
  /** "certificate", "datasheet", "photo" — used in the labels ("Upload a certificate"). */
  noun: string;
  /** The file picker's filter (the server checks type and content regardless). */
  accept: string;
  /** What the server takes, in words ("a PDF", "a PNG, JPEG or WebP image"). */
  takes: string;
  /** Photos are shown as thumbnails. */
  images?: boolean;
}

export const CERTIFICATE: AttachmentKindSpec = { noun: 'certificate', accept: 'application/pdf,.pdf', takes: 'a PDF' };
export const DATASHEET: AttachmentKindSpec = { noun: 'datasheet', accept: 'application/pdf,.pdf', takes: 'a PDF' };
export const PHOTO: AttachmentKindSpec = { noun: 'photo', accept: 'image/png,image/jpeg,image/webp,.png,.jpg,.jpeg,.webp', takes: 'a PNG, JPEG or WebP image', images: true };
/** The file kinds by their stored name (a register's spec names the kind its rows keep). */
export const ATTACHMENT_SPECS = { certificate: CERTIFICATE, datasheet: DATASHEET, photo: PHOTO } as const;

const kib = (n: number) => (n < 1024 * 1024 ? `${Math.max(1, Math.round(n / 1024))} KiB` : `${(n / (1024 * 1024)).toFixed(1)} MiB`);

/** Why an upload was refused, in words the user can act on. */
function refusal(e: unknown, spec: AttachmentKindSpec, name: string): string {
  const why = isApiError(e) || e instanceof Error ? e.message : 'The upload failed';
  if (isApiError(e) && e.code === 'unsupported_media') return `“${name}” was not accepted: ${why}. Choose ${spec.takes}.`;
  return `“${name}” was not uploaded: ${why}`;
}

/** One file: open it (a new tab), and remove it with a reason when allowed. */
function FileRow({ a, spec, canRemove, onRemove }: { a: Attachment; spec: AttachmentKindSpec; canRemove: boolean; onRemove: (a: Attachment) => void }) {
  return (
    <li className="flex flex-wrap items-center gap-3 py-1.5" data-testid={`attachment-${a.kind}`} data-name={a.originalName}>
      {spec.images && (
        <a href={fileUrl(a.fileId)} target="_blank" rel="noreferrer" className="shrink-0">
          <img src={fileUrl(a.fileId)} alt={`${spec.noun}: ${a.originalName}`} className="size-16 rounded border border-line object-cover" loading="lazy" />
        </a>
      )}
      <span className="min-w-0 flex-1">
        <a href={fileUrl(a.fileId)} target="_blank" rel="noreferrer" className="font-medium break-all text-accent hover:underline">
          {a.originalName}
        </a>
        <span className="block text-xs text-ink-muted">
          <span className="num">{kib(a.size)}</span> · {a.uploadedByName ?? 'uploaded'} · <span className="num">{formatDate(a.createdAt)}</span>
        </span>
      </span>
      {canRemove && (
        <Button variant="ghost" size="sm" onClick={() => onRemove(a)} aria-label={`Remove ${a.originalName}`}>
          Remove…
        </Button>
      )}
    </li>
  );
}

/**
 * The files of one record (a standard's certificates, an instrument's datasheets, a job's as-found
 * photos): list and open for everyone; upload and remove (with a reason) where the user may. The
 * server checks type and content; a refused file is reported here in words.
 */
export function AttachmentList({
  target,
  spec,
  canUpload,
  canRemove,
  lockedReason,
  emptyText,
  testId,
}: {
  target: AttachmentTarget;
  spec: AttachmentKindSpec;
  canUpload: boolean;
  canRemove: boolean;
  /** Why files cannot change now (a submitted or approved record), shown instead of the controls. */
  lockedReason?: string | undefined;
  emptyText?: string;
  testId?: string;
}) {
  const list = useAttachments(target);
  const { upload, remove } = useAttachmentActions(target);
  const input = useRef<HTMLInputElement>(null);
  const inputId = useId();
  const [error, setError] = useState<string | null>(null);
  const [removing, setRemoving] = useState<Attachment | null>(null);
  const [reason, setReason] = useState('');
  const [reasonError, setReasonError] = useState<string | null>(null);
  const editable = !lockedReason;

  const pick = (file: File | undefined) => {
    if (!file) return;
    setError(null);
    upload.mutate(file, {
      onSuccess: (a) => toast(`Uploaded ${a.originalName}`, { tone: 'success' }),
      onError: (e) => setError(refusal(e, spec, file.name)),
      onSettled: () => {
        if (input.current) input.current.value = '';
      },
    });
  };
  const confirmRemove = () => {
    if (!removing) return;
    if (reason.trim().length < 5) {
      setReasonError('Say why the file is removed (at least 5 characters)');
      return;
    }
    remove.mutate(
      { id: removing.id, reason: reason.trim() },
      {
        onSuccess: () => {
          toast(`Removed ${removing.originalName}`, { tone: 'success' });
          setRemoving(null);
          setReason('');
        },
        onError: (e) => setReasonError(isApiError(e) ? (e.fieldMessage('reason') ?? e.message) : 'The file was not removed'),
      },
    );
  };

  const items = list.data ?? [];
  return (
    <div className="flex flex-col gap-2" data-testid={testId}>
      {list.isPending ? (
        <p className="text-sm text-ink-muted">Loading the files…</p>
      ) : list.isError ? (
        <p className="text-sm text-danger">The files could not be loaded.</p>
      ) : items.length === 0 ? (
        <p className="text-sm text-ink-muted">{emptyText ?? `No ${spec.noun} uploaded.`}</p>
      ) : (
        <ul className="divide-y divide-line">
          {items.map((a) => (
            <FileRow
              key={a.id}
              a={a}
              spec={spec}
              canRemove={canRemove && editable}
              onRemove={(x) => {
                setRemoving(x);
                setReason('');
                setReasonError(null);
              }}
            />
          ))}
        </ul>
      )}
      {canUpload && editable && (
        <div className="flex flex-wrap items-center gap-2">
          <input
            ref={input}
            id={inputId}
            type="file"
            accept={spec.accept}
            className="sr-only"
            data-testid={testId ? `${testId}-input` : undefined}
            onChange={(e) => pick(e.target.files?.[0])}
          />
          <Button variant="secondary" size="sm" loading={upload.isPending} onClick={() => input.current?.click()}>
            Upload a {spec.noun}…
          </Button>
          <label htmlFor={inputId} className="text-xs text-ink-muted">
            {spec.takes[0]!.toUpperCase() + spec.takes.slice(1)}, up to 10 MiB
          </label>
        </div>
      )}
      {lockedReason && (canUpload || canRemove) && <p className="text-xs text-ink-muted">{lockedReason}</p>}
      {error && (
        <p role="alert" className="rounded-md border border-danger/40 bg-danger-soft px-3 py-2 text-sm text-danger" data-testid="upload-error">
          {error}
        </p>
      )}
      <Dialog
        open={!!removing}
        onClose={() => setRemoving(null)}
        title={`Remove ${removing?.originalName ?? 'the file'}?`}
        description="The file stays in the store and in the audit trail; it is no longer listed here. Say why it is removed."
        footer={
          <>
            <Button variant="secondary" onClick={() => setRemoving(null)}>
              Keep it
            </Button>
            <Button variant="danger" loading={remove.isPending} onClick={confirmRemove}>
              Remove
            </Button>
          </>
        }
      >
        <div className="flex flex-col gap-1.5">
          <label htmlFor={`${inputId}-reason`} className="text-sm font-medium">
            Reason for removing
          </label>
          <textarea
            id={`${inputId}-reason`}
            value={reason}
            onChange={(e) => setReason(e.target.value)}
            rows={3}
            maxLength={500}
            aria-invalid={!!reasonError}
            aria-describedby={reasonError ? `${inputId}-reason-error` : undefined}
            className="block w-full rounded-md border border-line bg-surface px-3 py-2 text-ink"
          />
          {reasonError && (
            <p id={`${inputId}-reason-error`} role="alert" className="text-sm text-danger">
              {reasonError}
            </p>
          )}
        </div>
      </Dialog>
    </div>
  );
}
