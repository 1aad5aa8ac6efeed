'use client';

import { useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { jsonFetch } from '@/components/forms/json-fetch';
import { Button } from '@/components/ui/button';
import { FormMessage } from '@/components/ui/field';
import { type ClusteringMethod, clusteringRequestSchema, hdbscanParamsSchema, kMeansParamsSchema } from '@/lib/validation/clusterings';

interface WireClustering {
  id: string;
  method: ClusteringMethod;
  params: Record<string, unknown>;
  seed: number;
  status: string;
  progress: number;
  phase: string | null;
  error: string | null;
  k: number | null;
  meanSilhouette: number | null;
  durationMs: number | null;
}

const HELP: Record<string, { label: string; help: string }> = {
  kMin: { label: 'Smallest k', help: 'Fewest clusters tried (2–50).' },
  kMax: { label: 'Largest k', help: 'Most clusters tried (2–50); the mean silhouette picks k in between. A wider range costs one fit per k.' },
  restarts: { label: 'Restarts', help: 'k-means++ restarts per k (1–100); more guards against a poor local optimum and costs time.' },
  minClusterSize: { label: 'Smallest cluster', help: 'The smallest group reported as a cluster (≥ 2). Larger: fewer, bigger clusters, small groups become noise. Common practice: about 1% of the entities.' },
  minSamples: { label: 'Density neighbourhood', help: 'Neighbours used to estimate density (1–200, empty = smallest cluster). Larger: smoother, more entities declared noise.' },
};
const FIELDS: Record<ClusteringMethod, string[]> = { kmeans: ['kMin', 'kMax', 'restarts'], hdbscan: ['minClusterSize', 'minSamples'] };
const DEFAULTS: Record<string, string> = { kMin: '2', kMax: '10', restarts: '10', minClusterSize: '10', minSamples: '' };

/** Cluster proposals computed in the full latent space; an expert accepts them as annotations on a map. */
export function ClustersPanel({ factorSetId, mayRun }: { factorSetId: string; mayRun: boolean }) {
  const queryClient = useQueryClient();
  const key = ['factor-sets', factorSetId, 'clusters'];
  const list = useQuery({
    queryKey: key,
    queryFn: () => jsonFetch<{ items: WireClustering[] }>(`/api/factor-sets/${factorSetId}/clusters`).then((r) => r.items),
    refetchInterval: (query) => (query.state.data?.some((c) => c.status === 'queued' || c.status === 'running') ? 1000 : false),
  });
  const [method, setMethod] = useState<ClusteringMethod>('kmeans');
  const [message, setMessage] = useState<{ kind: 'error' | 'success'; text: string } | null>(null);
  const form = useForm<{ seed: string; params: Record<string, string> }>({ defaultValues: { seed: '42', params: DEFAULTS } });

  const submit = form.handleSubmit(async (values) => {
    setMessage(null);
    const params: Record<string, number> = {};
    for (const field of FIELDS[method]) {
      const raw = values.params[field]?.trim() ?? '';
      if (raw !== '') params[field] = Number(raw);
    }
    // The route's own schemas: most mistakes are named before anything is sent.
    const checked = (method === 'kmeans' ? kMeansParamsSchema : hdbscanParamsSchema).safeParse(params);
    const request = clusteringRequestSchema.safeParse({ method, params, seed: Number(values.seed) });
    const issues = [...(checked.success ? [] : checked.error.issues), ...(request.success ? [] : request.error.issues)];
    if (issues.length > 0) return setMessage({ kind: 'error', text: issues.map((i) => i.message).join('; ') });
    try {
      const answer = await jsonFetch<{ existing: boolean }>(`/api/factor-sets/${factorSetId}/clusters`, { method: 'POST', body: JSON.stringify({ method, params, seed: Number(values.seed) }) });
      setMessage({ kind: 'success', text: answer.existing ? 'An identical proposal already exists; it is listed below.' : 'Queued.' });
      await queryClient.invalidateQueries({ queryKey: key });
    } catch (error) {
      setMessage({ kind: 'error', text: (error as Error).message });
    }
  });

  return (
    <section aria-labelledby="clusters-heading" className="flex flex-col gap-3">
      <h3 id="clusters-heading" className="text-lg font-semibold">
        Cluster proposals
      </h3>
      <p className="text-sm text-ink-muted">
        Computed in the full latent space, not on a map. Open any map of this factor set and choose a proposal under “Colour by”; experts accept clusters there as annotations.
      </p>
      {mayRun && (
        <form noValidate onSubmit={submit} aria-label="Propose clusters" className="flex flex-col gap-3 border border-rule bg-paper-raised p-4 text-sm">
          <div className="flex flex-wrap items-end gap-4">
            <label className="flex flex-col gap-1">
              <span className="font-medium">Method</span>
              <select className="border border-rule bg-paper px-3 py-2" value={method} onChange={(e) => setMethod(e.target.value === 'hdbscan' ? 'hdbscan' : 'kmeans')}>
                <option value="kmeans">k-means (k by silhouette)</option>
                <option value="hdbscan">HDBSCAN (density, with noise)</option>
              </select>
            </label>
            {FIELDS[method].map((field) => (
              <label key={`${method}-${field}`} className="flex w-44 flex-col gap-1">
                <span className="font-medium">{HELP[field]?.label}</span>
                <input inputMode="numeric" className="border border-rule bg-paper px-3 py-2" placeholder={field === 'minSamples' ? 'automatic' : undefined} {...form.register(`params.${field}`)} />
              </label>
            ))}
            <label className="flex w-24 flex-col gap-1">
              <span className="font-medium">Seed</span>
              <input inputMode="numeric" className="border border-rule bg-paper px-3 py-2" {...form.register('seed')} />
            </label>
            <Button type="submit" disabled={form.formState.isSubmitting}>
              Propose clusters
            </Button>
          </div>
          <ul className="text-xs text-ink-muted">
            {FIELDS[method].map((field) => (
              <li key={field}>
                <strong>{HELP[field]?.label}:</strong> {HELP[field]?.help}
              </li>
            ))}
          </ul>
          {message && <FormMessage kind={message.kind}>{message.text}</FormMessage>}
        </form>
      )}
      <ul className="tabular flex flex-col gap-1 text-sm" data-testid="clusterings-list">
        {(list.data ?? []).map((c) => (
          <li key={c.id} className="flex flex-wrap items-baseline gap-x-3 border-b border-rule py-1">
            <span className="font-medium">{c.method === 'kmeans' ? 'k-means' : 'HDBSCAN'}</span>
            <span className="text-ink-muted">seed {c.seed}</span>
            {c.status === 'done' ? (
              <span>
                {c.k} clusters · mean silhouette {c.meanSilhouette === null ? '—' : c.meanSilhouette.toFixed(3)}
                {c.durationMs !== null ? ` · ${(c.durationMs / 1000).toFixed(1)} s` : ''}
              </span>
            ) : c.status === 'failed' ? (
              <span className="text-danger">failed: {c.error}</span>
            ) : (
              <span className="text-ink-muted">
                {c.status}
                {c.phase ? ` — ${c.phase}` : ''} ({Math.round(c.progress * 100)}%)
              </span>
            )}
          </li>
        ))}
        {list.data?.length === 0 && <li className="text-ink-muted">No proposals yet.</li>}
      </ul>
    </section>
  );
}
