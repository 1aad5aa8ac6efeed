'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { jsonFetch } from '@/components/forms/json-fetch';
import Link from 'next/link';
import { Button, buttonClasses } from '@/components/ui/button';
import { FormMessage } from '@/components/ui/field';
import { PARAM_DOCS, type ProjectionMethod, projectionParamsSchemas } from '@/lib/projection/params';
import type { Projection } from '@/lib/projections/projections';
import { type ProjectionRequest, projectionRequestSchema } from '@/lib/validation/projections';

type FieldKind = { kind: 'int' | 'number' } | { kind: 'bool' } | { kind: 'enum'; options: readonly string[] };
type FieldSpec = { key: string; optional?: boolean } & FieldKind;

const METHOD_LABELS: Record<ProjectionMethod, string> = { pca: 'PCA', umap: 'UMAP', sammon: 'Sammon mapping', tsne: 't-SNE' };

/** Which inputs each method's settings take; meanings and ranges come from PARAM_DOCS. */
const FIELDS: Record<ProjectionMethod, FieldSpec[]> = {
  pca: [{ key: 'standardise', kind: 'bool' }],
  umap: [
    { key: 'nNeighbors', kind: 'int' },
    { key: 'minDist', kind: 'number' },
    { key: 'spread', kind: 'number' },
    { key: 'nEpochs', kind: 'int', optional: true },
    { key: 'metric', kind: 'enum', options: ['euclidean', 'cosine'] },
    { key: 'init', kind: 'enum', options: ['pca', 'random'] },
  ],
  sammon: [
    { key: 'maxIterations', kind: 'int' },
    { key: 'tolerance', kind: 'number' },
  ],
  tsne: [
    { key: 'perplexity', kind: 'number' },
    { key: 'iterations', kind: 'int' },
    { key: 'learningRate', kind: 'number' },
    { key: 'init', kind: 'enum', options: ['random', 'pca'] },
  ],
};

const DEFAULTS: Record<ProjectionMethod, Record<string, string | boolean>> = {
  pca: { standardise: false },
  umap: { nNeighbors: '15', minDist: '0.1', spread: '1', nEpochs: '', metric: 'euclidean', init: 'pca' },
  sammon: { maxIterations: '100', tolerance: '0.0001' },
  tsne: { perplexity: '30', iterations: '1000', learningRate: '10', init: 'random' },
};

const CAUTION: Record<ProjectionMethod, string> = {
  pca: 'PCA is linear: it keeps global variance and distances along its two axes, and may crowd local neighbourhoods together.',
  umap: 'UMAP keeps local neighbourhoods; distances between far-apart groups on the map are not meaningful.',
  sammon: 'Sammon mapping weights small distances most; large distances are bent to keep them.',
  tsne: 't-SNE keeps local neighbourhoods; distances between far-apart groups and cluster sizes are not meaningful.',
};

function docFor(method: ProjectionMethod, key: string): { label: string; help: string } {
  const docs = PARAM_DOCS[method] as Record<string, { label: string; help: string } | undefined>;
  return docs[key] ?? { label: key, help: '' };
}

type WireProjection = Omit<Projection, 'createdAt' | 'startedAt' | 'finishedAt'> & { createdAt: string };

const score = (value: number | null | undefined) => (value === null || value === undefined ? '—' : value.toFixed(3));

export function ProjectionsPanel({
  workspaceId,
  factorSetId,
  mayRun,
  mayDelete,
  lastSettings,
}: {
  workspaceId: string;
  factorSetId: string;
  mayRun: boolean;
  mayDelete: boolean;
  lastSettings: ProjectionRequest | null;
}) {
  const queryClient = useQueryClient();
  const key = ['factor-sets', factorSetId, 'projections'];
  const [problem, setProblem] = useState<string | null>(null);
  const list = useQuery({
    queryKey: key,
    queryFn: () => jsonFetch<{ items: WireProjection[] }>(`/api/factor-sets/${factorSetId}/projections`).then((r) => r.items),
    refetchInterval: (query) => (query.state.data?.some((p) => p.status === 'queued' || p.status === 'running') ? 1000 : false),
  });
  const act = useMutation({
    mutationFn: ({ id, action }: { id: string; action: 'cancel' | 'delete' }) =>
      action === 'cancel' ? jsonFetch(`/api/projections/${id}/cancel`, { method: 'POST' }) : jsonFetch(`/api/projections/${id}`, { method: 'DELETE' }),
    onMutate: () => setProblem(null),
    onError: (error) => setProblem(error.message),
    onSettled: () => queryClient.invalidateQueries({ queryKey: key }),
  });

  return (
    <section aria-labelledby="projections-heading" className="flex flex-col gap-4">
      <h3 id="projections-heading" className="text-lg font-semibold">
        Projections
      </h3>
      {problem && <FormMessage kind="error">{problem}</FormMessage>}
      {mayRun && <ProjectionForm factorSetId={factorSetId} lastSettings={lastSettings} onQueued={() => queryClient.invalidateQueries({ queryKey: key })} />}
      <div className="overflow-x-auto border border-rule bg-paper-raised">
        <table className="tabular w-full text-left text-sm" data-testid="projections-table">
          <thead className="border-b border-rule text-xs text-ink-muted">
            <tr>
              <th scope="col" className="px-3 py-2 font-medium">Method</th>
              <th scope="col" className="px-3 py-2 font-medium">Seed</th>
              <th scope="col" className="px-3 py-2 font-medium">Status</th>
              <th scope="col" className="px-3 py-2 text-right font-medium" title="Trustworthiness at k = 15">T₁₅</th>
              <th scope="col" className="px-3 py-2 text-right font-medium" title="Continuity at k = 15">C₁₅</th>
              <th scope="col" className="px-3 py-2 text-right font-medium" title="Share of 15 latent neighbours kept on the map">kNN kept</th>
              <th scope="col" className="px-3 py-2 text-right font-medium" title="Spearman correlation of latent and map distances">Shepard ρ</th>
              <th scope="col" className="px-3 py-2 text-right font-medium">Stress</th>
              <th scope="col" className="px-3 py-2 text-right font-medium">Time</th>
              <th scope="col" className="px-3 py-2"><span className="sr-only">Actions</span></th>
            </tr>
          </thead>
          <tbody>
            {(list.data ?? []).map((p) => (
              <tr key={p.id} className="border-b border-rule align-top last:border-0" data-testid={`projection-${p.method}`}>
                <td className="px-3 py-2">
                  <span className="font-medium">{METHOD_LABELS[p.method]}</span>
                  <span className="block text-xs text-ink-muted">
                    {Object.entries(p.params)
                      .filter(([k]) => k !== 'metric' || p.params.metric !== 'euclidean')
                      .map(([k, v]) => `${k} ${String(v)}`)
                      .join(' · ')}
                  </span>
                </td>
                <td className="px-3 py-2">{p.seed}</td>
                <td className="px-3 py-2" data-testid="projection-status">
                  {p.status === 'running' || p.status === 'queued' ? (
                    <span className="flex min-w-40 flex-col gap-1">
                      <progress className="h-1.5 w-full" max={1} value={p.progress} aria-label={`Progress of the ${METHOD_LABELS[p.method]} projection`} />
                      <span className="text-xs text-ink-muted">{p.phase ?? p.status}</span>
                    </span>
                  ) : p.status === 'failed' ? (
                    <span className="text-danger" title={p.error ?? undefined}>failed: {p.error}</span>
                  ) : (
                    p.status
                  )}
                </td>
                <td className="px-3 py-2 text-right" title={p.quality?.sampledQueries ? `Estimated from ${p.quality.sampledQueries} sampled entities (standard error about 0.005)` : undefined}>
                  {p.quality?.sampledQueries && p.quality.trustworthiness['15'] != null ? '≈ ' : ''}
                  {score(p.quality?.trustworthiness['15'])}
                </td>
                <td className="px-3 py-2 text-right">
                  {p.quality?.sampledQueries && p.quality.continuity['15'] != null ? '≈ ' : ''}
                  {score(p.quality?.continuity['15'])}
                </td>
                <td className="px-3 py-2 text-right">
                  {p.quality?.sampledQueries && Number.isFinite(p.quality.knnPreservation) ? '≈ ' : ''}
                  {score(p.quality?.knnPreservation)}
                </td>
                <td className="px-3 py-2 text-right">{score(p.quality?.shepardRho)}</td>
                <td className="px-3 py-2 text-right">{score(p.quality?.stress)}</td>
                <td className="px-3 py-2 text-right">{p.durationMs === null ? '—' : `${(p.durationMs / 1000).toFixed(1)} s`}</td>
                <td className="px-3 py-2 text-right">
                  {p.status === 'done' && (
                    <Link className={buttonClasses('quiet')} href={`/workspaces/${workspaceId}/projections/${p.id}`} data-testid="open-map">
                      Open map
                    </Link>
                  )}
                  {mayRun && (p.status === 'queued' || p.status === 'running') && (
                    <Button variant="quiet" onClick={() => act.mutate({ id: p.id, action: 'cancel' })}>
                      Cancel
                    </Button>
                  )}
                  {mayDelete && p.status !== 'queued' && p.status !== 'running' && (
                    <Button variant="quiet" onClick={() => act.mutate({ id: p.id, action: 'delete' })}>
                      Delete
                    </Button>
                  )}
                </td>
              </tr>
            ))}
            {list.data?.length === 0 && (
              <tr>
                <td colSpan={10} className="px-3 py-4 text-ink-muted">
                  No projections yet.
                </td>
              </tr>
            )}
          </tbody>
        </table>
      </div>
      <p className="text-xs text-ink-muted">
        Scores compare each entity&apos;s neighbourhood in the full latent space with the map: 1 is perfect. T₁₅ penalises map
        neighbours that are not latent neighbours, C₁₅ latent neighbours torn apart. Clusters drawn by eye on a map can be
        artefacts of the projection.
      </p>
    </section>
  );
}

/** The form's starting values: the workspace's last settings for this factor set, else the defaults. */
function startingValues(last: ProjectionRequest | null): { method: ProjectionMethod; seed: string; params: Record<string, string | boolean> } {
  if (!last) return { method: 'umap', seed: '42', params: DEFAULTS.umap };
  const params: Record<string, string | boolean> = { ...DEFAULTS[last.method] };
  for (const [key, value] of Object.entries(last.params ?? {})) {
    if (typeof value === 'boolean') params[key] = value;
    else if (typeof value === 'number' || typeof value === 'string') params[key] = String(value);
  }
  return { method: last.method, seed: String(last.seed), params };
}

function ProjectionForm({ factorSetId, lastSettings, onQueued }: { factorSetId: string; lastSettings: ProjectionRequest | null; onQueued: () => void }) {
  const [start] = useState(() => startingValues(lastSettings));
  const [method, setMethod] = useState<ProjectionMethod>(start.method);
  const [message, setMessage] = useState<{ kind: 'error' | 'success'; text: string } | null>(null);
  const form = useForm<{ seed: string; params: Record<string, string | boolean> }>({ defaultValues: { seed: start.seed, params: start.params } });

  const submit = form.handleSubmit(async (values) => {
    setMessage(null);
    const params: Record<string, unknown> = {};
    for (const field of FIELDS[method]) {
      const raw = values.params[field.key];
      if (field.kind === 'bool') params[field.key] = Boolean(raw);
      else if (field.kind === 'enum') params[field.key] = raw;
      else if (raw === '' || raw === undefined) {
        if (!field.optional) params[field.key] = Number.NaN;
      } else params[field.key] = Number(raw);
    }
    // The same schemas the API applies, so most mistakes are named before anything is sent.
    const checkedParams = projectionParamsSchemas[method].safeParse(params);
    const request = projectionRequestSchema.safeParse({ method, params, seed: Number(values.seed) });
    const issues = [...(checkedParams.success ? [] : checkedParams.error.issues), ...(request.success ? [] : request.error.issues)];
    if (issues.length) {
      setMessage({ kind: 'error', text: issues.map((i) => i.message).join('; ') });
      return;
    }
    try {
      const answer = await jsonFetch<{ id: string; existing: boolean }>(`/api/factor-sets/${factorSetId}/projections`, {
        method: 'POST',
        body: JSON.stringify({ method, params, seed: Number(values.seed) }),
      });
      setMessage({ kind: 'success', text: answer.existing ? 'An identical projection already exists; it is listed below.' : 'Queued.' });
      onQueued();
    } catch (error) {
      setMessage({ kind: 'error', text: (error as Error).message });
    }
  });

  return (
    <form noValidate onSubmit={submit} aria-label="Run a projection" className="flex flex-col gap-4 border border-rule bg-paper-raised p-4">
      <div className="flex flex-wrap items-end gap-4">
        <label className="flex flex-col gap-1 text-sm">
          <span className="font-medium">Method</span>
          <select
            className="border border-rule bg-paper px-3 py-2"
            value={method}
            onChange={(e) => {
              const next = e.target.value as ProjectionMethod;
              setMethod(next);
              form.reset({ seed: form.getValues('seed'), params: DEFAULTS[next] });
            }}
          >
            {(Object.keys(METHOD_LABELS) as ProjectionMethod[]).map((m) => (
              <option key={m} value={m}>
                {METHOD_LABELS[m]}
              </option>
            ))}
          </select>
        </label>
        <label className="flex w-28 flex-col gap-1 text-sm">
          <span className="font-medium">Seed</span>
          <input inputMode="numeric" className="border border-rule bg-paper px-3 py-2" {...form.register('seed')} />
        </label>
      </div>
      <p className="text-xs text-ink-muted">{CAUTION[method]}</p>
      <div className="grid gap-4 sm:grid-cols-2 lg:grid-cols-3">
        {FIELDS[method].map((field) => {
          const doc = docFor(method, field.key);
          const id = `param-${method}-${field.key}`;
          return (
            <div key={`${method}-${field.key}`} className="flex flex-col gap-1 text-sm">
              <label htmlFor={id} className="font-medium">
                {doc.label}
              </label>
              {field.kind === 'bool' ? (
                <input id={id} type="checkbox" className="h-4 w-4 self-start" {...form.register(`params.${field.key}`)} />
              ) : field.kind === 'enum' ? (
                <select id={id} className="border border-rule bg-paper px-3 py-2" {...form.register(`params.${field.key}`)}>
                  {field.options.map((o) => (
                    <option key={o} value={o}>
                      {o}
                    </option>
                  ))}
                </select>
              ) : (
                <input
                  id={id}
                  inputMode="decimal"
                  placeholder={field.optional ? 'automatic' : undefined}
                  className="border border-rule bg-paper px-3 py-2"
                  {...form.register(`params.${field.key}`)}
                />
              )}
              <p className="text-xs text-ink-muted">{doc.help}</p>
            </div>
          );
        })}
      </div>
      {message && <FormMessage kind={message.kind}>{message.text}</FormMessage>}
      <div>
        <Button type="submit">Run projection</Button>
      </div>
    </form>
  );
}
