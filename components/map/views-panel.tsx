'use client';

import { zodResolver } from '@hookform/resolvers/zod';
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import Link from 'next/link';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { jsonFetch } from '@/components/forms/json-fetch';
import { Button } from '@/components/ui/button';
import type { MapView } from '@/lib/map/view-state';
import { viewNameField } from '@/lib/validation/views';
import { z } from 'zod';

interface WireView {
  id: string;
  projectionId: string;
  factorSetId: string;
  name: string;
  state: MapView;
  createdBy: { id: string; name: string } | null;
  updatedAt: string;
}

const saveViewFormSchema = z.strictObject({ name: viewNameField });

/** Saved views of this factor set's maps, and saving the current one (owner and presenter). */
export function ViewsPanel({ workspaceId, factorSetId, maySave, currentView }: { workspaceId: string; factorSetId: string; maySave: boolean; currentView: MapView }) {
  const queryClient = useQueryClient();
  const key = ['views', workspaceId];
  const views = useQuery({ queryKey: key, queryFn: () => jsonFetch<{ items: WireView[] }>(`/api/workspaces/${workspaceId}/views`) });
  const [message, setMessage] = useState<string | null>(null);
  const form = useForm<z.input<typeof saveViewFormSchema>>({ resolver: zodResolver(saveViewFormSchema), defaultValues: { name: '' } });
  const save = useMutation({
    mutationFn: (name: string) => jsonFetch<WireView>(`/api/workspaces/${workspaceId}/views`, { method: 'POST', body: JSON.stringify({ name, state: currentView }) }),
    onSuccess: (view) => {
      setMessage(`Saved “${view.name}”.`);
      form.reset({ name: '' });
      void queryClient.invalidateQueries({ queryKey: key });
    },
    onError: (error) => setMessage(error.message),
  });
  const remove = useMutation({
    mutationFn: (id: string) => jsonFetch<void>(`/api/views/${id}`, { method: 'DELETE' }),
    onSuccess: () => void queryClient.invalidateQueries({ queryKey: key }),
    onError: (error) => setMessage(error.message),
  });
  const mine = (views.data?.items ?? []).filter((v) => v.factorSetId === factorSetId);
  return (
    <details className="border border-rule bg-paper-raised p-3 text-sm">
      <summary className="small-caps cursor-pointer font-semibold">Saved views{mine.length > 0 ? ` (${mine.length})` : ''}</summary>
      <ul className="mt-2 flex flex-col gap-1 text-xs" data-testid="views-list">
        {mine.map((v) => (
          <li key={v.id} className="flex items-center justify-between gap-2">
            <Link className="truncate text-accent hover:underline" href={`/workspaces/${workspaceId}/projections/${v.projectionId}?savedView=${v.id}`}>
              {v.name}
            </Link>
            <span className="text-ink-muted">{v.createdBy?.name}</span>
            {maySave && (
              <button type="button" className="text-danger hover:underline" onClick={() => remove.mutate(v.id)} aria-label={`Delete view ${v.name}`}>
                delete
              </button>
            )}
          </li>
        ))}
        {mine.length === 0 && <li className="text-ink-muted">No saved views yet. The address bar always holds the current view, to paste to a colleague.</li>}
      </ul>
      {maySave && (
        <form className="mt-2 flex items-end gap-2" noValidate onSubmit={form.handleSubmit((values) => save.mutate(values.name))} aria-label="Save this view">
          <label className="flex flex-1 flex-col gap-0.5 text-xs">
            <span className="text-ink-muted">Name</span>
            <input className="border border-rule bg-paper px-1.5 py-1" {...form.register('name')} />
          </label>
          <Button type="submit" variant="secondary" className="px-2 py-1" disabled={save.isPending}>
            Save view
          </Button>
        </form>
      )}
      {form.formState.errors.name && <p className="text-xs text-danger">{form.formState.errors.name.message}</p>}
      {message && (
        <p className="text-xs" role="status">
          {message}
        </p>
      )}
    </details>
  );
}
