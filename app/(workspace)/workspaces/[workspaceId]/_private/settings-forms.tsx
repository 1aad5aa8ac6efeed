'use client';

import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { showActionErrors } from '@/components/forms/action-errors';
import { Button } from '@/components/ui/button';
import { FormMessage, TextField } from '@/components/ui/field';
import { renameWorkspaceSchema } from '@/lib/validation/workspaces';
import { deleteWorkspaceAction, leaveWorkspaceAction, renameWorkspaceAction } from '../../../_private/actions';

export function RenameWorkspaceForm({ workspaceId, name }: { workspaceId: string; name: string }) {
  const [saved, setSaved] = useState(false);
  const form = useForm<z.input<typeof renameWorkspaceSchema>, unknown, z.output<typeof renameWorkspaceSchema>>({
    resolver: zodResolver(renameWorkspaceSchema),
    defaultValues: { name },
  });
  const { errors, isSubmitting } = form.formState;
  return (
    <form
      noValidate
      className="flex flex-col gap-3"
      onSubmit={form.handleSubmit(async (values) => {
        setSaved(false);
        const result = await renameWorkspaceAction(workspaceId, values);
        if (result.ok) setSaved(true);
        else showActionErrors(result, form.setError);
      })}
    >
      {errors.root?.message && <FormMessage kind="error">{errors.root.message}</FormMessage>}
      {saved && <FormMessage kind="success">Renamed.</FormMessage>}
      <TextField label="Workspace name" error={errors.name?.message} {...form.register('name')} />
      <div>
        <Button type="submit" disabled={isSubmitting}>
          Rename
        </Button>
      </div>
    </form>
  );
}

export function DeleteWorkspaceForm({ workspaceId, name }: { workspaceId: string; name: string }) {
  const [typed, setTyped] = useState('');
  const [error, setError] = useState<string | null>(null);
  const [pending, setPending] = useState(false);
  return (
    <form
      className="flex flex-col gap-3"
      onSubmit={async (event) => {
        event.preventDefault();
        setPending(true);
        const result = await deleteWorkspaceAction(workspaceId, typed);
        setPending(false);
        if (!result.ok) setError(result.error);
      }}
    >
      {error && <FormMessage kind="error">{error}</FormMessage>}
      <TextField
        label={`Type “${name}” to confirm`}
        value={typed}
        onChange={(e) => setTyped(e.target.value)}
        autoComplete="off"
      />
      <div>
        <Button type="submit" variant="danger" disabled={pending || typed.trim() !== name}>
          Delete this workspace and everything in it
        </Button>
      </div>
    </form>
  );
}

export function LeaveWorkspaceButton({ workspaceId }: { workspaceId: string }) {
  const [error, setError] = useState<string | null>(null);
  return (
    <div className="flex flex-col gap-2">
      {error && <FormMessage kind="error">{error}</FormMessage>}
      <div>
        <Button
          variant="secondary"
          onClick={async () => {
            if (!window.confirm('Leave this workspace? You will need a new invitation to come back.')) return;
            const result = await leaveWorkspaceAction(workspaceId);
            if (!result.ok) setError(result.error);
          }}
        >
          Leave workspace
        </Button>
      </div>
    </div>
  );
}
