import { useState } from 'react';
import { ImportReportSchema, type ImportReport } from '../../../shared/schemas/register-csv';
import { api, isApiError } from '../../lib/api-client';
import { cn } from '../../lib/cn';
import { Button } from '../ui/button';
import { Dialog } from '../ui/dialog';

export interface CsvImportDialogProps {
  open: boolean;
  onClose: () => void;
  /** e.g. '/api/instruments/import'. */
  endpoint: string;
  title: string;
  /** Columns of our layout, shown as a hint. */
  columns: readonly string[];
  onImported: (written: number) => void;
}

/**
 * CSV import in two steps: the file is checked on the server (nothing written) and every row shown
 * with its problems; only a clean file can be confirmed, and then every row is written at once.
 */
export function CsvImportDialog({ open, onClose, endpoint, title, columns, onImported }: CsvImportDialogProps) {
  const [csv, setCsv] = useState('');
  const [name, setName] = useState('');
  const [report, setReport] = useState<ImportReport | null>(null);
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const reset = () => {
    setCsv('');
    setName('');
    setReport(null);
    setError(null);
  };
  const call = async (confirm: boolean) => {
    setBusy(true);
    setError(null);
    try {
      const r = await api.post(endpoint, { csv, confirm }, { schema: ImportReportSchema });
      if (confirm) {
        onImported(r.written);
        reset();
      } else setReport(r);
    } catch (e) {
      setError(isApiError(e) ? e.message : String(e));
    } finally {
      setBusy(false);
    }
  };
  const clean = report && report.invalid === 0 && report.fileErrors.length === 0 && report.total > 0;
  return (
    <Dialog
      open={open}
      onClose={() => {
        reset();
        onClose();
      }}
      title={title}
      description="Step 1 checks the file and writes nothing. Step 2 writes every row at once, and only when no row has a problem."
      className="w-[min(60rem,calc(100vw-2rem))]"
    >
      <div className="flex flex-col gap-3 text-sm">
        <label className="flex flex-col gap-1">
          <span className="font-medium">CSV file (UTF-8, header row)</span>
          <input
            type="file"
            accept=".csv,text/csv"
            onChange={async (e) => {
              const f = e.target.files?.[0];
              setReport(null);
              if (!f) return;
              setName(f.name);
              setCsv(await f.text());
            }}
          />
        </label>
        <p className="text-xs text-ink-muted">
          Columns: <span className="num">{columns.join(', ')}</span>
        </p>
        {error && (
          <p role="alert" className="text-danger">
            {error}
          </p>
        )}
        {report && (
          <div className="flex flex-col gap-2" data-testid="import-report">
            <p>
              {name && <span className="num">{name}: </span>}
              <span className="num">{report.total}</span> rows, <span className="num text-ok">{report.valid}</span> ready,{' '}
              <span className={cn('num', report.invalid > 0 && 'font-semibold text-danger')}>{report.invalid}</span> with problems.
            </p>
            {report.fileErrors.map((f) => (
              <p key={f} role="alert" className="text-danger">
                {f}
              </p>
            ))}
            <div className="max-h-80 overflow-auto rounded-md border border-line">
              <table className="w-full text-xs">
                <thead className="sticky top-0 bg-sunken text-left">
                  <tr>
                    <th className="px-2 py-1">Row</th>
                    <th className="px-2 py-1">Line</th>
                    <th className="px-2 py-1">Key</th>
                    <th className="px-2 py-1">Result</th>
                  </tr>
                </thead>
                <tbody>
                  {report.rows.map((r) => (
                    <tr key={r.row} className={cn('border-t border-line', !r.ok && 'bg-danger-soft')}>
                      <td className="num px-2 py-1">{r.row}</td>
                      <td className="num px-2 py-1">{r.line}</td>
                      <td className="num px-2 py-1">{r.key || '—'}</td>
                      <td className="px-2 py-1">
                        {r.ok ? (
                          <span className="text-ok">Ready</span>
                        ) : (
                          <ul>
                            {Object.entries(r.errors).map(([f, msgs]) => (
                              <li key={f}>
                                <span className="num font-medium">{f === '_row' ? 'row' : f}</span>: {msgs.join('; ')}
                              </li>
                            ))}
                          </ul>
                        )}
                      </td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          </div>
        )}
        <div className="flex justify-end gap-2 pt-2">
          <Button variant="secondary" onClick={() => void call(false)} disabled={!csv} loading={busy && !report}>
            1. Check the file
          </Button>
          <Button onClick={() => void call(true)} disabled={!clean} loading={busy && !!report}>
            2. Import {report?.valid ?? ''} rows
          </Button>
        </div>
      </div>
    </Dialog>
  );
}
