'use client';

import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { showActionErrors } from '@/components/forms/action-errors';
import { Button } from '@/components/ui/button';
import { FormMessage, TextField } from '@/components/ui/field';
import { createWorkspaceSchema } from '@/lib/validation/workspaces';
import { createWorkspaceAction } from './actions';

export function CreateWorkspaceForm() {
  const form = useForm<z.input<typeof createWorkspaceSchema>, unknown, z.output<typeof createWorkspaceSchema>>({
    resolver: zodResolver(createWorkspaceSchema),
    defaultValues: { name: '' },
  });
  const { errors, isSubmitting } = form.formState;
  return (
    <form
      noValidate
      aria-label="Create a workspace"
      className="flex flex-col gap-3 sm:flex-row sm:items-end"
      onSubmit={form.handleSubmit(async (values) => showActionErrors(await createWorkspaceAction(values), form.setError))}
    >
      <TextField
        className="flex-1"
        label="New workspace name"
        placeholder="e.g. Shop factors, spring refit"
        error={errors.name?.message}
        {...form.register('name')}
      />
      <Button type="submit" disabled={isSubmitting}>
        {isSubmitting ? 'Creating…' : 'Create workspace'}
      </Button>
      {errors.root?.message && <FormMessage kind="error">{errors.root.message}</FormMessage>}
    </form>
  );
}
