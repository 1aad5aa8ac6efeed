'use client';

import { useRouter } from 'next/navigation';
import { useRef, useState } from 'react';
import { useForm } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { FormMessage, SelectField, TextField } from '@/components/ui/field';
import type { ImportPreview } from '@/lib/factor-sets/import-flow';
import { IMPORT_FORMATS } from '@/lib/import/types';
import { importFieldsSchema } from '@/lib/validation/factor-sets';

interface ImportFailure {
  code: string;
  message: string;
  file?: string;
  places?: { file: string; line?: number; column?: number | string; byteOffset?: number; index?: string; message: string }[];
  count?: number;
}

interface FormValues {
  name: string;
  format: string;
  idColumn: string;
  labelColumn: string;
  metadataColumns: string;
  delimiter: string;
  header: string;
  parameter: string;
  partnerParameter: string;
}

const FORMAT_OPTIONS = [{ value: '', label: 'Detect from the file' }, ...IMPORT_FORMATS.map((f) => ({ value: f, label: f }))];
const DELIMITER_OPTIONS = [
  { value: '', label: 'Detect' },
  { value: ',', label: 'Comma' },
  { value: '\t', label: 'Tab' },
  { value: ';', label: 'Semicolon' },
];
const HEADER_OPTIONS = [
  { value: '', label: 'Detect' },
  { value: 'yes', label: 'First row is a header' },
  { value: 'no', label: 'No header' },
];

function formatBytes(bytes: number): string {
  if (bytes < 1024) return `${bytes} B`;
  if (bytes < 1024 ** 2) return `${(bytes / 1024).toFixed(1)} KiB`;
  if (bytes < 1024 ** 3) return `${(bytes / 1024 ** 2).toFixed(1)} MiB`;
  return `${(bytes / 1024 ** 3).toFixed(2)} GiB`;
}

/** The text fields of the upload, built from the form and checked with the route's own schema. */
function uploadFields(values: FormValues): Record<string, string> {
  const options: Record<string, unknown> = {};
  if (values.idColumn.trim()) options.idColumn = values.idColumn.trim();
  if (values.labelColumn.trim()) options.labelColumn = values.labelColumn.trim();
  const metadataColumns = values.metadataColumns.split(',').map((c) => c.trim()).filter(Boolean);
  if (metadataColumns.length) options.metadataColumns = metadataColumns;
  if (values.delimiter) options.delimiter = values.delimiter;
  if (values.header) options.header = values.header === 'yes';
  if (values.parameter.trim()) options.parameter = values.parameter.trim();
  if (values.partnerParameter.trim()) options.partnerParameter = values.partnerParameter.trim();
  const fields: Record<string, string> = { options: JSON.stringify(options) };
  if (values.name.trim()) fields.name = values.name.trim();
  if (values.format) fields.format = values.format;
  return fields;
}

/** XMLHttpRequest rather than fetch: only it reports the bytes actually sent. */
function upload(url: string, body: FormData, onProgress: (sent: number, total: number) => void): Promise<{ status: number; body: unknown }> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', url);
    xhr.responseType = 'json';
    xhr.upload.onprogress = (event) => onProgress(event.loaded, event.lengthComputable ? event.total : 0);
    xhr.onload = () => resolve({ status: xhr.status, body: xhr.response as unknown });
    xhr.onerror = () => reject(new Error('The upload failed: the connection to the server was lost'));
    xhr.send(body);
  });
}

export function ImportWizard({ workspaceId }: { workspaceId: string }) {
  const router = useRouter();
  const [file, setFile] = useState<File | null>(null);
  const [labels, setLabels] = useState<File | null>(null);
  const [dragging, setDragging] = useState(false);
  const [progress, setProgress] = useState<{ sent: number; total: number } | null>(null);
  const [phase, setPhase] = useState<'choose' | 'uploading' | 'parsing' | 'report' | 'storing'>('choose');
  const [preview, setPreview] = useState<ImportPreview | null>(null);
  const [failure, setFailure] = useState<ImportFailure | null>(null);
  const fileInput = useRef<HTMLInputElement>(null);
  const form = useForm<FormValues>({
    defaultValues: { name: '', format: '', idColumn: '', labelColumn: '', metadataColumns: '', delimiter: '', header: '', parameter: '', partnerParameter: '' },
  });

  const submit = form.handleSubmit(async (values) => {
    setFailure(null);
    if (!file) {
      setFailure({ code: 'no_file', message: 'Choose a file to import first.' });
      return;
    }
    const fields = uploadFields(values);
    const checked = importFieldsSchema.safeParse(fields);
    if (!checked.success) {
      setFailure({ code: 'invalid_input', message: checked.error.issues.map((i) => i.message).join('; ') });
      return;
    }
    const body = new FormData();
    for (const [key, value] of Object.entries(fields)) body.append(key, value);
    body.append('file', file);
    if (labels) body.append('labels', labels);
    setPhase('uploading');
    setProgress({ sent: 0, total: file.size + (labels?.size ?? 0) });
    try {
      const answer = await upload(`/api/workspaces/${workspaceId}/imports`, body, (sent, total) => {
        setProgress({ sent, total });
        if (total && sent >= total) setPhase('parsing');
      });
      if (answer.status === 200) {
        setPreview(answer.body as ImportPreview);
        setPhase('report');
      } else {
        setFailure((answer.body as { error?: ImportFailure } | null)?.error ?? { code: 'failed', message: `The server answered ${answer.status}` });
        setPhase('choose');
      }
    } catch (error) {
      setFailure({ code: 'network', message: (error as Error).message });
      setPhase('choose');
    }
  });

  async function confirm() {
    if (!preview) return;
    setPhase('storing');
    const name = form.getValues('name').trim();
    const response = await fetch(`/api/imports/${preview.importId}`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify(name ? { name } : {}),
    });
    const body = (await response.json()) as { id?: string; error?: ImportFailure };
    if (response.status === 201 && body.id) {
      router.push(`/workspaces/${workspaceId}/factor-sets/${body.id}`);
      router.refresh();
    } else {
      setFailure(body.error ?? { code: 'failed', message: `The server answered ${response.status}` });
      setPhase('choose');
      setPreview(null);
    }
  }

  async function discard() {
    if (preview) await fetch(`/api/imports/${preview.importId}`, { method: 'DELETE' });
    setPreview(null);
    setPhase('choose');
  }

  const busy = phase === 'uploading' || phase === 'parsing' || phase === 'storing';

  return (
    <div className="flex flex-col gap-6">
      {failure && <ImportFailureReport failure={failure} />}
      {phase !== 'report' && (
        <form noValidate onSubmit={submit} className="flex flex-col gap-5" aria-label="Upload a factor file">
          <div
            onDragOver={(e) => {
              e.preventDefault();
              setDragging(true);
            }}
            onDragLeave={() => setDragging(false)}
            onDrop={(e) => {
              e.preventDefault();
              setDragging(false);
              const dropped = e.dataTransfer.files[0];
              if (dropped) setFile(dropped);
            }}
            className={`flex flex-col items-center gap-3 border-2 border-dashed p-8 text-center ${dragging ? 'border-accent bg-accent-wash' : 'border-rule bg-paper-raised'}`}
          >
            <p className="text-sm text-ink-muted">Drop the factor file here, or</p>
            <label className="cursor-pointer border border-accent px-3.5 py-2 text-sm font-medium text-accent focus-within:outline focus-within:outline-2 focus-within:outline-accent">
              Choose a file
              <input
                ref={fileInput}
                type="file"
                name="file"
                aria-label="Factor file"
                className="sr-only"
                onChange={(e) => setFile(e.target.files?.[0] ?? null)}
              />
            </label>
            {file && (
              <p className="tabular text-sm" data-testid="chosen-file">
                {file.name} · {formatBytes(file.size)}
              </p>
            )}
          </div>
          <div className="grid gap-4 sm:grid-cols-2">
            <TextField label="Name" hint="Defaults to the file name." {...form.register('name')} />
            <SelectField label="Format" options={FORMAT_OPTIONS} {...form.register('format')} />
            <div className="flex flex-col gap-1">
              <label htmlFor="labels-file" className="text-sm font-medium">
                Labels and metadata (optional)
              </label>
              <input
                id="labels-file"
                type="file"
                className="text-sm"
                onChange={(e) => setLabels(e.target.files?.[0] ?? null)}
              />
              <p className="text-xs text-ink-muted">A delimited file with an id column, joined by id.</p>
            </div>
          </div>
          <details className="border border-rule bg-paper-raised p-4">
            <summary className="cursor-pointer text-sm font-medium">Override what detection decides</summary>
            <div className="mt-4 grid gap-4 sm:grid-cols-3">
              <TextField label="Id column" hint="Header name or 1-based number." {...form.register('idColumn')} />
              <TextField label="Label column" {...form.register('labelColumn')} />
              <TextField label="Numeric metadata columns" hint="Comma-separated; kept out of the factors." {...form.register('metadataColumns')} />
              <SelectField label="Delimiter" options={DELIMITER_OPTIONS} {...form.register('delimiter')} />
              <SelectField label="Header row" options={HEADER_OPTIONS} {...form.register('header')} />
              <TextField label="Parameter (draws)" hint="e.g. gamma for gamma[i,k]." {...form.register('parameter')} />
              <TextField label="Joint partner parameter" hint="e.g. delta: aligned with the same rotations." {...form.register('partnerParameter')} />
            </div>
          </details>
          {progress && busy && (
            <div className="flex flex-col gap-1" aria-live="polite">
              <progress
                className="h-2 w-full accent-[var(--accent)]"
                aria-label="Upload progress"
                max={progress.total || 1}
                value={progress.sent}
              />
              <p className="tabular text-xs text-ink-muted" data-testid="upload-progress">
                {phase === 'uploading'
                  ? `Sent ${formatBytes(progress.sent)} of ${formatBytes(progress.total)}`
                  : phase === 'parsing'
                    ? `Sent ${formatBytes(progress.sent)}; reading the file…`
                    : 'Storing…'}
              </p>
            </div>
          )}
          <div>
            <Button type="submit" disabled={busy || !file}>
              {busy ? 'Working…' : 'Upload and check'}
            </Button>
          </div>
        </form>
      )}
      {phase === 'report' && preview && <ParseReport preview={preview} onConfirm={confirm} onDiscard={discard} />}
      {phase === 'storing' && <p className="text-sm text-ink-muted">Storing the factor set…</p>}
    </div>
  );
}

function ImportFailureReport({ failure }: { failure: ImportFailure }) {
  const places = failure.places ?? [];
  return (
    <div role="alert" className="flex flex-col gap-2 border border-danger/50 bg-danger-wash p-4 text-sm">
      <p className="font-semibold text-danger">
        {failure.file && !failure.message.startsWith(failure.file) ? `${failure.file}: ` : ''}
        {failure.message}
      </p>
      {places.length > 0 && (
        <ol className="tabular list-inside list-decimal text-ink">
          {places.map((p, i) => (
            <li key={i}>
              {p.line !== undefined && `line ${p.line}`}
              {p.column !== undefined && `, column ${p.column}`}
              {p.byteOffset !== undefined && `byte ${p.byteOffset}`}
              {p.index !== undefined && `index ${p.index}`}: {p.message}
            </li>
          ))}
        </ol>
      )}
      {failure.count !== undefined && failure.count > places.length && (
        <p className="text-ink-muted">…and {failure.count - places.length} more places.</p>
      )}
      <p className="text-ink-muted">Nothing was stored.</p>
    </div>
  );
}

function ParseReport({ preview, onConfirm, onDiscard }: { preview: ImportPreview; onConfirm: () => void; onDiscard: () => void }) {
  const shownDims = preview.preview[0]?.values.length ?? 0;
  return (
    <section aria-labelledby="report-heading" className="flex flex-col gap-5" data-testid="parse-report">
      <h3 id="report-heading" className="text-lg font-semibold">
        Parse report
      </h3>
      <dl className="tabular grid grid-cols-2 gap-x-6 gap-y-2 text-sm sm:grid-cols-4">
        <div>
          <dt className="text-ink-muted">Detected format</dt>
          <dd data-testid="report-format">{preview.format}</dd>
        </div>
        <div>
          <dt className="text-ink-muted">Shape</dt>
          <dd data-testid="report-shape">
            {preview.rows} × {preview.dims}
            {preview.draws > 0 ? `, ${preview.draws} draws` : ''}
          </dd>
        </div>
        <div>
          <dt className="text-ink-muted">File</dt>
          <dd>
            {preview.fileName} · {formatBytes(preview.bytes)}
          </dd>
        </div>
        <div>
          <dt className="text-ink-muted">SHA-256</dt>
          <dd className="truncate" title={preview.sha256}>
            {preview.sha256.slice(0, 16)}…
          </dd>
        </div>
      </dl>
      {preview.draws > 0 && (
        <p className="border border-caution/50 bg-caution-wash p-3 text-sm">
          The draws will be aligned by generalised Procrustes before their mean is stored
          {preview.partner ? `, jointly with ${preview.partner.parameter} (${preview.partner.rows} rows)` : ''}. The
          values below are the first draw as uploaded, before alignment.
        </p>
      )}
      {preview.warnings.length > 0 && (
        <div className="border border-caution/50 bg-caution-wash p-3 text-sm">
          <p className="font-semibold">Warnings</p>
          <ul className="list-inside list-disc">
            {preview.warnings.map((w, i) => (
              <li key={i}>{w}</li>
            ))}
          </ul>
        </div>
      )}
      <div className="overflow-x-auto border border-rule bg-paper-raised">
        <table className="tabular w-full text-left text-sm">
          <thead className="border-b border-rule text-xs text-ink-muted">
            <tr>
              <th scope="col" className="px-3 py-2 font-medium">id</th>
              {preview.hasLabels && <th scope="col" className="px-3 py-2 font-medium">label</th>}
              {Array.from({ length: shownDims }, (_, k) => (
                <th key={k} scope="col" className="px-3 py-2 text-right font-medium">
                  dim {k + 1}
                </th>
              ))}
              {preview.metadataColumns.map((c) => (
                <th key={c.name} scope="col" className="px-3 py-2 font-medium">
                  {c.name} <span className="small-caps text-ink-faint">{c.type}</span>
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {preview.preview.map((row) => (
              <tr key={row.id} className="border-b border-rule last:border-0">
                <td className="px-3 py-1.5">{row.id}</td>
                {preview.hasLabels && <td className="px-3 py-1.5">{row.label ?? '—'}</td>}
                {row.values.map((v, k) => (
                  <td key={k} className="px-3 py-1.5 text-right">
                    {v.toPrecision(4)}
                  </td>
                ))}
                {row.metadata.map((m, j) => (
                  <td key={j} className="px-3 py-1.5">
                    {m === null ? '—' : String(m)}
                  </td>
                ))}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {preview.dims > shownDims && <p className="text-xs text-ink-muted">Showing the first {shownDims} of {preview.dims} dimensions.</p>}
      <div className="flex gap-3">
        <Button onClick={onConfirm}>Store this factor set</Button>
        <Button variant="secondary" onClick={onDiscard}>
          Discard
        </Button>
      </div>
    </section>
  );
}
