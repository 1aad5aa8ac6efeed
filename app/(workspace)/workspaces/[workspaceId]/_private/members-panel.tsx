'use client';

import { zodResolver } from '@hookform/resolvers/zod';
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { showActionErrors } from '@/components/forms/action-errors';
import { jsonFetch } from '@/components/forms/json-fetch';
import { Button } from '@/components/ui/button';
import { FormMessage, SelectField, TextField } from '@/components/ui/field';
import { ROLE_SUMMARIES, ROLES, type Role } from '@/lib/permissions';
import { inviteSchema } from '@/lib/validation/workspaces';
import { inviteAction, revokeInvitationAction } from '../../../_private/actions';

/** Shapes as the JSON API returns them (dates as ISO strings). */
export interface MemberDto {
  userId: string;
  email: string;
  name: string | null;
  role: Role;
  joinedAt: string;
}
export interface InvitationDto {
  id: string;
  email: string;
  role: Role;
  expiresAt: string;
  createdAt: string;
}

const ROLE_OPTIONS = ROLES.map((r) => ({ value: r, label: r }));

const dateFormat = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium' });

export function MembersPanel({
  workspaceId,
  currentUserId,
  canManage,
  initialMembers,
  initialInvitations,
}: {
  workspaceId: string;
  currentUserId: string;
  canManage: boolean;
  initialMembers: MemberDto[];
  initialInvitations: InvitationDto[];
}) {
  const queryClient = useQueryClient();
  const membersKey = ['workspaces', workspaceId, 'members'];
  const invitationsKey = ['workspaces', workspaceId, 'invitations'];
  const [problem, setProblem] = useState<string | null>(null);

  const members = useQuery({
    queryKey: membersKey,
    queryFn: () => jsonFetch<{ items: MemberDto[] }>(`/api/workspaces/${workspaceId}/members`).then((r) => r.items),
    initialData: initialMembers,
  });
  const invitations = useQuery({
    queryKey: invitationsKey,
    queryFn: () => jsonFetch<{ items: InvitationDto[] }>(`/api/workspaces/${workspaceId}/invitations`).then((r) => r.items),
    initialData: initialInvitations,
    enabled: canManage,
  });

  const changeRole = useMutation({
    mutationFn: ({ userId, role }: { userId: string; role: Role }) =>
      jsonFetch<MemberDto>(`/api/workspaces/${workspaceId}/members/${userId}`, { method: 'PATCH', body: JSON.stringify({ role }) }),
    onMutate: () => setProblem(null),
    onError: (error) => setProblem(error.message),
    onSettled: () => queryClient.invalidateQueries({ queryKey: membersKey }),
  });
  const remove = useMutation({
    mutationFn: (userId: string) => jsonFetch<void>(`/api/workspaces/${workspaceId}/members/${userId}`, { method: 'DELETE' }),
    onMutate: () => setProblem(null),
    onError: (error) => setProblem(error.message),
    onSettled: () => queryClient.invalidateQueries({ queryKey: membersKey }),
  });

  return (
    <div className="flex flex-col gap-8">
      {problem && <FormMessage kind="error">{problem}</FormMessage>}
      <section aria-labelledby="members-heading" className="flex flex-col gap-3">
        <h2 id="members-heading" className="text-lg font-semibold">
          Members <span className="tabular text-ink-muted">({members.data.length})</span>
        </h2>
        <div className="overflow-x-auto border border-rule bg-paper-raised">
          <table className="w-full text-left text-sm">
            <thead className="border-b border-rule text-xs text-ink-muted">
              <tr>
                <th scope="col" className="px-4 py-2 font-medium">Name</th>
                <th scope="col" className="px-4 py-2 font-medium">E-mail</th>
                <th scope="col" className="px-4 py-2 font-medium">Role</th>
                <th scope="col" className="px-4 py-2 font-medium">Joined</th>
                {canManage && <th scope="col" className="px-4 py-2 font-medium"><span className="sr-only">Actions</span></th>}
              </tr>
            </thead>
            <tbody>
              {members.data.map((m) => (
                <tr key={m.userId} className="border-b border-rule last:border-0" data-testid={`member-${m.email}`}>
                  <td className="px-4 py-2">{m.name ?? '—'}{m.userId === currentUserId && <span className="ml-2 text-xs text-ink-muted">(you)</span>}</td>
                  <td className="px-4 py-2">{m.email}</td>
                  <td className="px-4 py-2">
                    {canManage ? (
                      <select
                        aria-label={`Role of ${m.email}`}
                        className="border border-rule bg-paper px-2 py-1"
                        value={m.role}
                        disabled={changeRole.isPending}
                        onChange={(e) => changeRole.mutate({ userId: m.userId, role: e.target.value as Role })}
                      >
                        {ROLES.map((r) => (
                          <option key={r} value={r}>{r}</option>
                        ))}
                      </select>
                    ) : (
                      <span className="small-caps">{m.role}</span>
                    )}
                  </td>
                  <td className="tabular px-4 py-2 text-ink-muted">{dateFormat.format(new Date(m.joinedAt))}</td>
                  {canManage && (
                    <td className="px-4 py-2 text-right">
                      {m.userId !== currentUserId && (
                        <Button
                          variant="quiet"
                          aria-label={`Remove ${m.email}`}
                          disabled={remove.isPending}
                          onClick={() => {
                            if (window.confirm(`Remove ${m.email} from this workspace?`)) remove.mutate(m.userId);
                          }}
                        >
                          Remove
                        </Button>
                      )}
                    </td>
                  )}
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </section>

      {canManage && (
        <>
          <InviteForm workspaceId={workspaceId} onInvited={() => queryClient.invalidateQueries({ queryKey: invitationsKey })} />
          <section aria-labelledby="invitations-heading" className="flex flex-col gap-3">
            <h2 id="invitations-heading" className="text-lg font-semibold">Pending invitations</h2>
            {invitations.data.length === 0 ? (
              <p className="text-sm text-ink-muted">None waiting.</p>
            ) : (
              <ul className="flex flex-col divide-y divide-rule border border-rule bg-paper-raised text-sm">
                {invitations.data.map((inv) => (
                  <li key={inv.id} className="flex flex-wrap items-center gap-3 px-4 py-2">
                    <span className="flex-1">{inv.email}</span>
                    <span className="small-caps">{inv.role}</span>
                    <span className="tabular text-ink-muted">expires {dateFormat.format(new Date(inv.expiresAt))}</span>
                    <Button
                      variant="quiet"
                      aria-label={`Revoke the invitation for ${inv.email}`}
                      onClick={async () => {
                        const result = await revokeInvitationAction(workspaceId, inv.id);
                        if (!result.ok) setProblem(result.error);
                        await queryClient.invalidateQueries({ queryKey: invitationsKey });
                      }}
                    >
                      Revoke
                    </Button>
                  </li>
                ))}
              </ul>
            )}
          </section>
        </>
      )}
      <section aria-labelledby="roles-heading" className="flex flex-col gap-2">
        <h2 id="roles-heading" className="text-lg font-semibold">What each role may do</h2>
        <dl className="grid gap-x-6 gap-y-1 text-sm sm:grid-cols-[8rem_1fr]">
          {ROLES.map((r) => (
            <div key={r} className="contents">
              <dt className="small-caps font-semibold">{r}</dt>
              <dd className="text-ink-muted">{ROLE_SUMMARIES[r]}</dd>
            </div>
          ))}
        </dl>
      </section>
    </div>
  );
}

function InviteForm({ workspaceId, onInvited }: { workspaceId: string; onInvited: () => void }) {
  const [sentTo, setSentTo] = useState<string | null>(null);
  const form = useForm<z.input<typeof inviteSchema>, unknown, z.output<typeof inviteSchema>>({
    resolver: zodResolver(inviteSchema),
    defaultValues: { email: '', role: 'viewer' },
  });
  const { errors, isSubmitting } = form.formState;
  return (
    <section aria-labelledby="invite-heading" className="flex flex-col gap-3">
      <h2 id="invite-heading" className="text-lg font-semibold">Invite someone</h2>
      <form
        noValidate
        className="flex flex-col gap-3 sm:flex-row sm:items-start"
        onSubmit={form.handleSubmit(async (values) => {
          setSentTo(null);
          const result = await inviteAction(workspaceId, values);
          if (result.ok) {
            setSentTo(result.data.email);
            form.reset({ email: '', role: values.role });
            onInvited();
          } else {
            showActionErrors(result, form.setError);
          }
        })}
      >
        <TextField className="flex-1" label="E-mail" type="email" error={errors.email?.message} {...form.register('email')} />
        <SelectField label="Role" options={ROLE_OPTIONS} error={errors.role?.message} {...form.register('role')} />
        <div className="sm:pt-6">
          <Button type="submit" disabled={isSubmitting}>
            {isSubmitting ? 'Sending…' : 'Send invitation'}
          </Button>
        </div>
      </form>
      {errors.root?.message && <FormMessage kind="error">{errors.root.message}</FormMessage>}
      {sentTo && <FormMessage kind="success">Invitation sent to {sentTo}. The link expires in 7 days.</FormMessage>}
    </section>
  );
}
