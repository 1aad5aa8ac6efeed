'use client';

import { zodResolver } from '@hookform/resolvers/zod';
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { jsonFetch } from '@/components/forms/json-fetch';
import { Button } from '@/components/ui/button';
import { CATEGORICAL_LIGHT, hexOf } from '@/lib/map/palette';
import { type AnnotationFormInput, annotationFormSchema } from '@/lib/validation/annotations';
import type { WireAnnotation, WireClustering } from './types';
import { annotationsKey } from './use-map-data';

interface WireChange {
  version: number;
  action: 'created' | 'updated' | 'deleted';
  changes: {
    fields?: Record<string, { from: string | null; to: string | null }>;
    added?: number;
    removed?: number;
    addedSample?: string[];
    removedSample?: string[];
    fromClusterProposal?: { clusteringId: string; label: number };
  };
  actor: { id: string; name: string } | null;
  at: string;
}

const SWATCHES = CATEGORICAL_LIGHT.map((rgb) => hexOf(rgb).toLowerCase());
const when = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium', timeStyle: 'short' });

function AnnotationForm({ initial, submitLabel, onSubmit, onCancel }: { initial: AnnotationFormInput; submitLabel: string; onSubmit: (values: AnnotationFormInput) => Promise<void>; onCancel?: () => void }) {
  const form = useForm<AnnotationFormInput>({ resolver: zodResolver(annotationFormSchema), defaultValues: initial });
  const color = form.watch('color');
  return (
    <form className="flex flex-col gap-2 text-xs" noValidate onSubmit={form.handleSubmit(onSubmit)} aria-label={submitLabel}>
      <label className="flex flex-col gap-0.5">
        <span className="text-ink-muted">Name</span>
        <input className="border border-rule bg-paper px-1.5 py-1" {...form.register('name')} />
      </label>
      {form.formState.errors.name && <p className="text-danger">{form.formState.errors.name.message}</p>}
      <fieldset className="flex flex-col gap-1">
        <legend className="text-ink-muted">Colour</legend>
        <div className="flex flex-wrap gap-1">
          {SWATCHES.map((swatch) => (
            <button
              key={swatch}
              type="button"
              className={`h-5 w-5 rounded-full border ${color === swatch ? 'border-ink ring-2 ring-accent' : 'border-rule'}`}
              style={{ background: swatch }}
              aria-label={`Colour ${swatch}`}
              aria-pressed={color === swatch}
              onClick={() => form.setValue('color', swatch, { shouldValidate: true })}
            />
          ))}
        </div>
        <input className="w-24 border border-rule bg-paper px-1.5 py-1 font-mono" aria-label="Colour as #rrggbb" {...form.register('color')} />
      </fieldset>
      {form.formState.errors.color && <p className="text-danger">{form.formState.errors.color.message}</p>}
      <label className="flex flex-col gap-0.5">
        <span className="text-ink-muted">Description</span>
        <textarea rows={2} className="border border-rule bg-paper px-1.5 py-1" {...form.register('description')} />
      </label>
      <div className="flex gap-2">
        <Button type="submit" className="px-2 py-1" disabled={form.formState.isSubmitting}>
          {submitLabel}
        </Button>
        {onCancel && (
          <Button variant="secondary" className="px-2 py-1" onClick={onCancel}>
            Cancel
          </Button>
        )}
      </div>
    </form>
  );
}

function History({ annotationId }: { annotationId: string }) {
  const history = useQuery({ queryKey: ['annotation-history', annotationId], queryFn: () => jsonFetch<{ items: WireChange[] }>(`/api/annotations/${annotationId}/history`) });
  if (history.error) return <p className="text-danger">{history.error.message}</p>;
  return (
    <ol className="flex flex-col gap-1 text-[11px] text-ink-muted" data-testid="annotation-history">
      {(history.data?.items ?? []).map((change) => (
        <li key={change.version}>
          <span className="tabular">v{change.version}</span> {change.action} by {change.actor?.name ?? 'someone'}, {when.format(new Date(change.at))}
          {change.changes.fields &&
            Object.entries(change.changes.fields)
              .filter(([, v]) => v.from !== null)
              .map(([field, v]) => ` · ${field}: “${v.from}” → “${v.to}”`)
              .join('')}
          {change.changes.added ? ` · +${change.changes.added} (${(change.changes.addedSample ?? []).join(', ')}${(change.changes.added ?? 0) > 5 ? ', …' : ''})` : ''}
          {change.changes.removed ? ` · −${change.changes.removed}` : ''}
          {change.changes.fromClusterProposal ? ' · accepted from a cluster proposal' : ''}
        </li>
      ))}
    </ol>
  );
}

interface AnnotationsPanelProps {
  factorSetId: string;
  annotations: WireAnnotation[];
  selection: Uint32Array;
  mayEdit: boolean;
  clusterings: WireClustering[];
  clusterLabels: Int32Array | null;
  clusteringId: string | null;
  onSelect: (indices: number[]) => void;
}

/** Named clusters of the factor set: shown on every projection of it, edited by experts, analysts and owners. */
export function AnnotationsPanel(props: AnnotationsPanelProps) {
  const { factorSetId, annotations, selection, mayEdit } = props;
  const queryClient = useQueryClient();
  const [creating, setCreating] = useState(false);
  const [editing, setEditing] = useState<string | null>(null);
  const [historyOf, setHistoryOf] = useState<string | null>(null);
  const [message, setMessage] = useState<{ kind: 'error' | 'ok'; text: string } | null>(null);
  const refresh = () => queryClient.invalidateQueries({ queryKey: annotationsKey(factorSetId) });

  const run = async (action: () => Promise<unknown>, ok: string) => {
    setMessage(null);
    try {
      await action();
      setMessage({ kind: 'ok', text: ok });
    } catch (error) {
      setMessage({ kind: 'error', text: (error as Error).message });
    } finally {
      await refresh();
      if (historyOf) await queryClient.invalidateQueries({ queryKey: ['annotation-history', historyOf] });
    }
  };

  const patch = (annotation: WireAnnotation, body: Record<string, unknown>) =>
    jsonFetch<WireAnnotation>(`/api/annotations/${annotation.id}`, { method: 'PATCH', body: JSON.stringify({ version: annotation.version, ...body }) });

  const accept = useMutation({
    mutationFn: (label: number) =>
      jsonFetch<WireAnnotation>(`/api/factor-sets/${factorSetId}/annotations`, {
        method: 'POST',
        body: JSON.stringify({ name: `Proposal cluster ${label + 1}`, color: SWATCHES[label % SWATCHES.length], description: 'Accepted from a cluster proposal computed in the full latent space.', clusterProposal: { clusteringId: props.clusteringId, label } }),
      }),
    onSuccess: (a) => {
      setMessage({ kind: 'ok', text: `Accepted as “${a.name}”; rename it to say what it means.` });
      void refresh();
    },
    onError: (error) => setMessage({ kind: 'error', text: error.message }),
  });

  const clusterCount = (() => {
    if (!props.clusterLabels) return 0;
    let k = 0;
    for (const label of props.clusterLabels) k = Math.max(k, label + 1);
    return k;
  })();

  return (
    <section className="flex flex-col gap-2 border border-rule bg-paper-raised p-3 text-sm" aria-labelledby="annotations-title" data-testid="annotations-panel">
      <h3 id="annotations-title" className="small-caps font-semibold">
        Annotations
      </h3>
      {annotations.length === 0 && <p className="text-xs text-ink-muted">No annotations yet.{mayEdit ? ' Select points and name what they share.' : ''}</p>}
      <ul className="flex flex-col gap-2">
        {annotations.map((annotation) => (
          <li key={annotation.id} className="flex flex-col gap-1 border-t border-rule pt-2 first:border-t-0 first:pt-0" data-testid="annotation-item">
            <div className="flex items-center gap-2">
              <span className="inline-block h-3 w-3 shrink-0 rounded-full" style={{ background: annotation.color }} aria-hidden="true" />
              <strong className="truncate" data-testid="annotation-name">
                {annotation.name}
              </strong>
              <span className="tabular ml-auto text-xs text-ink-muted" data-testid="annotation-count">
                {annotation.memberCount.toLocaleString('en-GB')}
              </span>
            </div>
            {annotation.description && <p className="text-xs text-ink-muted">{annotation.description}</p>}
            <p className="text-[11px] text-ink-muted">
              v{annotation.version} · {annotation.updatedBy?.name ?? 'someone'}, {when.format(new Date(annotation.updatedAt))}
            </p>
            <div className="flex flex-wrap gap-x-3 gap-y-1 text-xs">
              <button type="button" className="text-accent hover:underline" onClick={() => props.onSelect(annotation.indices ?? [])}>
                Select its points
              </button>
              <button type="button" className="text-accent hover:underline" onClick={() => setHistoryOf(historyOf === annotation.id ? null : annotation.id)}>
                {historyOf === annotation.id ? 'Hide history' : 'History'}
              </button>
              {mayEdit && (
                <>
                  <button type="button" className="text-accent hover:underline" onClick={() => setEditing(editing === annotation.id ? null : annotation.id)}>
                    Edit
                  </button>
                  <button
                    type="button"
                    className="text-accent hover:underline disabled:opacity-50"
                    disabled={selection.length === 0}
                    onClick={() => run(() => patch(annotation, { add: { indices: Array.from(selection) } }), `Added the selection to “${annotation.name}”.`)}
                  >
                    Add selection
                  </button>
                  <button
                    type="button"
                    className="text-accent hover:underline disabled:opacity-50"
                    disabled={selection.length === 0}
                    onClick={() => run(() => patch(annotation, { remove: { indices: Array.from(selection) } }), `Removed the selection from “${annotation.name}”.`)}
                  >
                    Remove selection
                  </button>
                  <button
                    type="button"
                    className="text-danger hover:underline"
                    onClick={() => {
                      if (window.confirm(`Delete the annotation “${annotation.name}”? Its history is kept.`)) {
                        void run(() => jsonFetch<void>(`/api/annotations/${annotation.id}?version=${annotation.version}`, { method: 'DELETE' }), `Deleted “${annotation.name}”.`);
                      }
                    }}
                  >
                    Delete
                  </button>
                </>
              )}
            </div>
            {editing === annotation.id && (
              <AnnotationForm
                initial={{ name: annotation.name, color: annotation.color, description: annotation.description }}
                submitLabel="Save changes"
                onCancel={() => setEditing(null)}
                onSubmit={async (values) => {
                  await run(() => patch(annotation, values), `Saved “${values.name}”.`);
                  setEditing(null);
                }}
              />
            )}
            {historyOf === annotation.id && <History annotationId={annotation.id} />}
          </li>
        ))}
      </ul>
      {mayEdit && !creating && (
        <Button variant="secondary" className="self-start px-2 py-1" disabled={selection.length === 0} onClick={() => setCreating(true)}>
          New annotation from {selection.length.toLocaleString('en-GB')} selected
        </Button>
      )}
      {mayEdit && creating && (
        <AnnotationForm
          initial={{ name: '', color: SWATCHES[annotations.length % SWATCHES.length] ?? '#1e4d5c', description: '' }}
          submitLabel="Create annotation"
          onCancel={() => setCreating(false)}
          onSubmit={async (values) => {
            await run(
              () => jsonFetch<WireAnnotation>(`/api/factor-sets/${factorSetId}/annotations`, { method: 'POST', body: JSON.stringify({ ...values, indices: Array.from(selection) }) }),
              `Created “${values.name}”.`,
            );
            setCreating(false);
          }}
        />
      )}
      {mayEdit && props.clusteringId && clusterCount > 0 && (
        <div className="flex flex-col gap-1 border-t border-rule pt-2 text-xs">
          <p className="text-ink-muted">This cluster proposal was computed in the full latent space. Accept a cluster as an annotation:</p>
          <div className="flex flex-wrap gap-1">
            {Array.from({ length: clusterCount }, (_, label) => (
              <Button key={label} variant="secondary" className="px-2 py-0.5" disabled={accept.isPending} onClick={() => accept.mutate(label)}>
                Accept cluster {label + 1}
              </Button>
            ))}
          </div>
        </div>
      )}
      {message && (
        <p className={`text-xs ${message.kind === 'error' ? 'text-danger' : 'text-ink-muted'}`} role={message.kind === 'error' ? 'alert' : 'status'}>
          {message.text}
        </p>
      )}
    </section>
  );
}
