'use client';

import { zodResolver } from '@hookform/resolvers/zod';
import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { FormMessage, SelectField, TextField } from '@/components/ui/field';
import { type FitFormInput, type FitFormOutput, fitFormSchema } from '@/lib/fits/validation';

interface Failure {
  code: string;
  message: string;
  file?: string;
  line?: number | null;
  column?: number | string | null;
  places?: { line?: number; column?: number | string; message: string }[];
  count?: number;
  details?: { path: string; message: string }[] | unknown;
}

type CovariateChoice = 'auto' | 'numeric' | 'categorical';

/** Reads the header line of a delimited file in the browser (the first 64 KiB), to offer its column names. */
async function readHeader(file: File): Promise<string[]> {
  const text = await file.slice(0, 64 * 1024).text();
  const line = (text.replace(/^\uFEFF/, '').split(/\r?\n/)[0] ?? '').trim();
  const counts = [',', '\t', ';'].map((d) => [d, line.split(d).length] as const);
  const delimiter = counts.reduce((best, next) => (next[1] > best[1] ? next : best))[0];
  const names: string[] = [];
  let cell = '';
  let quoted = false;
  for (let i = 0; i < line.length; i++) {
    const c = line[i];
    if (quoted) {
      if (c === '"' && line[i + 1] === '"') {
        cell += '"';
        i++;
      } else if (c === '"') quoted = false;
      else cell += c;
    } else if (c === '"') quoted = true;
    else if (c === delimiter) {
      names.push(cell.trim());
      cell = '';
    } else cell += c;
  }
  names.push(cell.trim());
  return names.filter((n) => n !== '');
}

const HELP = {
  rowColumn: 'The entity each row of factors γ belongs to (e.g. shop). Each distinct value becomes one entity of the first factor set.',
  columnColumn: 'The other entity (e.g. book category); its factors δ form the second factor set. Must differ from the row entity.',
  outcome: 'What is modelled: any finite number (Gaussian), 0 or 1 (Bernoulli) or a count ≥ 0 (Poisson).',
  offset: 'Optional. Added to the linear predictor with coefficient 1 — typically an exposure such as footfall for counts.',
  offsetScale: '“Exposure” takes the log of a positive exposure (expected counts proportional to it); “log scale” adds the column as it is.',
  likelihood: 'Gaussian: identity link, noise scale estimated. Bernoulli: logit link. Poisson: log link.',
  rank: 'K, latent dimensions (1–64). More can fit more structure but needs more observations per entity and overfits sooner; the held-out comparison and ARD scales show whether extra dimensions earn their keep.',
  method: 'MAP: the posterior mode, fast. Variational: mean-field approximation started at the mode, giving draws of the factors and intervals for main effects; it understates posterior spread.',
  hierarchical: 'Automatic relevance determination: each dimension learns its own prior scale, so unneeded dimensions shrink to zero and you see how many the data support. Can remove a weak real dimension when data are few.',
  folds: '0 (no cross-validation) or 2–20. More folds train on more data per fold (less pessimistic held-out error) but cost one fit per fold for each of the three models.',
  seed: 'Fixes the random start, the folds and the draws: the same seed and table give the same fit.',
  priorScale: 'σ of the Normal prior on main effects and covariate effects (per covariate sd), 0.001–10000. Small shrinks effects of sparse entities towards 0; large approaches unpenalised maximum likelihood.',
  draws: 'Variational draws of the factors kept (10–1000), aligned by generalised Procrustes like imported draws.',
} as const;

export function FitForm({ workspaceId }: { workspaceId: string }) {
  const router = useRouter();
  const [file, setFile] = useState<File | null>(null);
  const [columns, setColumns] = useState<string[]>([]);
  const [covariates, setCovariates] = useState<Record<string, CovariateChoice | undefined>>({});
  const [failure, setFailure] = useState<Failure | null>(null);
  const form = useForm<FitFormInput, unknown, FitFormOutput>({
    resolver: zodResolver(fitFormSchema),
    defaultValues: {
      settings: { rowColumn: '', columnColumn: '', outcome: '', likelihood: 'gaussian', rank: 4, method: 'map', hierarchical: false, folds: 5, seed: 1, priorScale: 1, draws: 200, covariates: [] },
    },
  });
  const { errors, isSubmitting } = form.formState;
  const watched = form.watch('settings');
  const used = new Set([watched.rowColumn, watched.columnColumn, watched.outcome, watched.offset ?? ''].filter(Boolean));
  const columnOptions = [{ value: '', label: columns.length ? 'Choose a column' : 'Choose a file first' }, ...columns.map((c) => ({ value: c, label: c }))];

  const chooseFile = async (chosen: File | null) => {
    setFile(chosen);
    setFailure(null);
    setCovariates({});
    form.setValue('settings.covariates', []);
    setColumns(chosen ? await readHeader(chosen).catch(() => []) : []);
  };

  const updateCovariate = (column: string, choice: CovariateChoice | undefined) => {
    const next = { ...covariates, [column]: choice };
    setCovariates(next);
    form.setValue(
      'settings.covariates',
      Object.entries(next)
        .filter((entry): entry is [string, CovariateChoice] => entry[1] !== undefined)
        .map(([c, type]) => (type === 'auto' ? c : { column: c, type })),
    );
  };

  const submit = form.handleSubmit(async (values) => {
    setFailure(null);
    if (!file) {
      setFailure({ code: 'no_file', message: 'Choose the table to fit first.' });
      return;
    }
    const settings = { ...values.settings, covariates: (values.settings.covariates ?? []).filter((c) => !used.has(typeof c === 'string' ? c : c.column)) };
    if (settings.method !== 'variational') delete settings.draws;
    const body = new FormData();
    body.append('settings', JSON.stringify(settings));
    if (values.name) body.append('name', values.name);
    body.append('file', file);
    const response = await fetch(`/api/workspaces/${workspaceId}/fits`, { method: 'POST', body });
    const answer = (await response.json().catch(() => null)) as { id?: string; error?: Failure } | null;
    if (response.status === 202 && answer?.id) {
      router.push(`/workspaces/${workspaceId}/fits/${answer.id}`);
      router.refresh();
    } else setFailure(answer?.error ?? { code: 'failed', message: `The server answered ${response.status}` });
  });

  const settingsErrors = errors.settings;
  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-6" aria-label="Fit a factorization machine">
      {failure && <FailureReport failure={failure} />}
      {errors.root?.message && <FormMessage kind="error">{errors.root.message}</FormMessage>}
      <div className="flex flex-col gap-3 border-2 border-dashed border-rule bg-paper-raised p-6">
        <label className="w-fit cursor-pointer border border-accent px-3.5 py-2 text-sm font-medium text-accent focus-within:outline focus-within:outline-2 focus-within:outline-accent">
          Choose the table
          <input type="file" name="file" aria-label="Observation table" className="sr-only" accept=".csv,.tsv,.txt,text/csv,text/tab-separated-values" onChange={(e) => void chooseFile(e.target.files?.[0] ?? null)} />
        </label>
        {file && (
          <p className="tabular text-sm" data-testid="chosen-file">
            {file.name} · {columns.length ? `${columns.length} columns: ${columns.join(', ')}` : 'no header found'}
          </p>
        )}
        <p className="text-xs text-ink-muted">Delimited text (comma, tab or semicolon) whose first line names the columns.</p>
      </div>

      <fieldset className="grid gap-4 sm:grid-cols-2 lg:grid-cols-3">
        <legend className="small-caps mb-2 text-xs font-semibold text-ink-muted">Columns</legend>
        <SelectField label="Row entity" hint={HELP.rowColumn} options={columnOptions} error={settingsErrors?.rowColumn?.message} {...form.register('settings.rowColumn')} />
        <SelectField label="Column entity" hint={HELP.columnColumn} options={columnOptions} error={settingsErrors?.columnColumn?.message} {...form.register('settings.columnColumn')} />
        <SelectField label="Outcome" hint={HELP.outcome} options={columnOptions} error={settingsErrors?.outcome?.message} {...form.register('settings.outcome')} />
        <SelectField
          label="Offset (optional)"
          hint={HELP.offset}
          options={[{ value: '', label: 'None' }, ...columns.map((c) => ({ value: c, label: c }))]}
          error={settingsErrors?.offset?.message}
          {...form.register('settings.offset', { setValueAs: (v: string) => (v === '' ? undefined : v) })}
        />
        {watched.offset && (
          <SelectField
            label="Offset scale"
            hint={HELP.offsetScale}
            options={[
              { value: 'exposure', label: 'Exposure (log taken)' },
              { value: 'log', label: 'Already on the log scale' },
            ]}
            error={settingsErrors?.offsetScale?.message}
            {...form.register('settings.offsetScale')}
          />
        )}
      </fieldset>

      {columns.length > 0 && (
        <fieldset className="flex flex-col gap-2">
          <legend className="small-caps mb-2 text-xs font-semibold text-ink-muted">Covariates</legend>
          <p className="text-xs text-ink-muted">
            Optional. Numeric columns enter as they are (standardised inside the fit); categorical ones are one-hot encoded with the first level seen as the reference. “Decide” treats a column as numeric when
            most of its cells are numbers.
          </p>
          <div className="grid gap-2 sm:grid-cols-2 lg:grid-cols-3">
            {columns
              .filter((c) => !used.has(c))
              .map((c) => (
                <label key={c} className="flex items-center justify-between gap-2 border border-rule bg-paper-raised px-3 py-2 text-sm">
                  <span>{c}</span>
                  <select
                    aria-label={`Use ${c} as a covariate`}
                    className="border border-rule bg-paper-raised px-2 py-1 text-sm"
                    value={covariates[c] ?? ''}
                    onChange={(e) => updateCovariate(c, e.target.value === '' ? undefined : (e.target.value as CovariateChoice))}
                  >
                    <option value="">not used</option>
                    <option value="auto">decide</option>
                    <option value="numeric">numeric</option>
                    <option value="categorical">categorical</option>
                  </select>
                </label>
              ))}
          </div>
        </fieldset>
      )}

      <fieldset className="grid gap-4 sm:grid-cols-2 lg:grid-cols-3">
        <legend className="small-caps mb-2 text-xs font-semibold text-ink-muted">Model</legend>
        <SelectField
          label="Likelihood"
          hint={HELP.likelihood}
          options={[
            { value: 'gaussian', label: 'Gaussian' },
            { value: 'bernoulli', label: 'Bernoulli (0/1)' },
            { value: 'poisson', label: 'Poisson (counts)' },
          ]}
          error={settingsErrors?.likelihood?.message}
          {...form.register('settings.likelihood')}
        />
        <TextField label="Rank K" type="number" min={1} max={64} step={1} hint={HELP.rank} error={settingsErrors?.rank?.message} {...form.register('settings.rank', { valueAsNumber: true })} />
        <SelectField
          label="Method"
          hint={HELP.method}
          options={[
            { value: 'map', label: 'MAP (posterior mode)' },
            { value: 'variational', label: 'Variational (approximate draws)' },
          ]}
          error={settingsErrors?.method?.message}
          {...form.register('settings.method')}
        />
        {watched.method === 'variational' && (
          <TextField label="Draws" type="number" min={10} max={1000} step={1} hint={HELP.draws} error={settingsErrors?.draws?.message} {...form.register('settings.draws', { valueAsNumber: true })} />
        )}
        <div className="flex flex-col gap-1">
          <label className="flex items-center gap-2 text-sm font-medium">
            <input type="checkbox" {...form.register('settings.hierarchical')} />
            Hierarchical factor prior (ARD)
          </label>
          <p className="text-xs text-ink-muted">{HELP.hierarchical}</p>
        </div>
        <TextField label="Prior scale σ" type="number" min={0.001} max={10000} step="any" hint={HELP.priorScale} error={settingsErrors?.priorScale?.message} {...form.register('settings.priorScale', { valueAsNumber: true })} />
      </fieldset>

      <fieldset className="grid gap-4 sm:grid-cols-2 lg:grid-cols-3">
        <legend className="small-caps mb-2 text-xs font-semibold text-ink-muted">Evaluation and reproducibility</legend>
        <TextField label="Cross-validation folds" type="number" min={0} max={20} step={1} hint={HELP.folds} error={settingsErrors?.folds?.message} {...form.register('settings.folds', { valueAsNumber: true })} />
        <TextField label="Seed" type="number" min={0} step={1} hint={HELP.seed} error={settingsErrors?.seed?.message} {...form.register('settings.seed', { valueAsNumber: true })} />
        <TextField label="Name (optional)" hint="Defaults to the file name; the factor sets are named after it." error={errors.name?.message} {...form.register('name', { setValueAs: (v: string) => (v.trim() === '' ? undefined : v) })} />
      </fieldset>

      <div>
        <Button type="submit" disabled={isSubmitting || !file}>
          {isSubmitting ? 'Checking the table…' : 'Check and start the fit'}
        </Button>
      </div>
    </form>
  );
}

function FailureReport({ failure }: { failure: Failure }) {
  const places = failure.places ?? [];
  const details = Array.isArray(failure.details) ? (failure.details as { path: string; message: string }[]) : [];
  return (
    <div role="alert" className="flex flex-col gap-2 border border-danger/50 bg-danger-wash p-4 text-sm" data-testid="fit-failure">
      <p className="font-semibold text-danger">{failure.message}</p>
      {places.length > 0 && (
        <ol className="tabular list-inside list-decimal text-ink">
          {places.map((p, i) => (
            <li key={i}>
              {p.line !== undefined && `line ${p.line}`}
              {p.column !== undefined && `, column ${p.column}`}: {p.message}
            </li>
          ))}
        </ol>
      )}
      {failure.count !== undefined && failure.count > places.length && <p className="text-ink-muted">…and {failure.count - places.length} more places.</p>}
      {details.length > 0 && (
        <ul className="list-inside list-disc">
          {details.map((d, i) => (
            <li key={i}>{d.path ? `${d.path}: ${d.message}` : d.message}</li>
          ))}
        </ul>
      )}
      <p className="text-ink-muted">Nothing was stored or queued.</p>
    </div>
  );
}
