'use client';

import { zodResolver } from '@hookform/resolvers/zod';
import Link from 'next/link';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { showActionErrors } from '@/components/forms/action-errors';
import { Button } from '@/components/ui/button';
import { FormMessage, TextField } from '@/components/ui/field';
import { forgotPasswordSchema, resetPasswordSchema, signUpSchema } from '@/lib/validation/auth';
import { forgotPasswordAction, resetPasswordAction, signUpAction } from './actions';

export function SignUpForm({ invitationToken, invitedEmail }: { invitationToken?: string; invitedEmail?: string }) {
  const form = useForm<z.input<typeof signUpSchema>, unknown, z.output<typeof signUpSchema>>({
    resolver: zodResolver(signUpSchema),
    defaultValues: { name: '', email: invitedEmail ?? '', password: '', invitationToken },
  });
  const { errors, isSubmitting } = form.formState;
  return (
    <form
      noValidate
      className="flex flex-col gap-4"
      onSubmit={form.handleSubmit(async (values) => showActionErrors(await signUpAction(values), form.setError))}
    >
      {errors.root?.message && <FormMessage kind="error">{errors.root.message}</FormMessage>}
      <TextField label="Your name" autoComplete="name" error={errors.name?.message} {...form.register('name')} />
      <TextField
        label="E-mail"
        type="email"
        autoComplete="email"
        readOnly={Boolean(invitedEmail)}
        hint={invitedEmail ? 'The address the invitation was sent to.' : undefined}
        error={errors.email?.message}
        {...form.register('email')}
      />
      <TextField
        label="Password"
        type="password"
        autoComplete="new-password"
        hint="At least 10 characters."
        error={errors.password?.message}
        {...form.register('password')}
      />
      <Button type="submit" disabled={isSubmitting}>
        {isSubmitting ? 'Creating your account…' : invitationToken ? 'Create account and join' : 'Create account'}
      </Button>
    </form>
  );
}

export function ForgotPasswordForm() {
  const [sent, setSent] = useState(false);
  const form = useForm<z.input<typeof forgotPasswordSchema>, unknown, z.output<typeof forgotPasswordSchema>>({
    resolver: zodResolver(forgotPasswordSchema),
    defaultValues: { email: '' },
  });
  const { errors, isSubmitting } = form.formState;
  if (sent) {
    return (
      <FormMessage kind="success">
        If an account uses that address, a reset link is on its way. It works once and expires in an hour.
      </FormMessage>
    );
  }
  return (
    <form
      noValidate
      className="flex flex-col gap-4"
      onSubmit={form.handleSubmit(async (values) => {
        const result = await forgotPasswordAction(values);
        if (result.ok) setSent(true);
        else showActionErrors(result, form.setError);
      })}
    >
      {errors.root?.message && <FormMessage kind="error">{errors.root.message}</FormMessage>}
      <TextField label="E-mail" type="email" autoComplete="email" error={errors.email?.message} {...form.register('email')} />
      <Button type="submit" disabled={isSubmitting}>
        {isSubmitting ? 'Sending…' : 'Send a reset link'}
      </Button>
    </form>
  );
}

export function ResetPasswordForm({ token }: { token: string }) {
  const form = useForm<z.input<typeof resetPasswordSchema>, unknown, z.output<typeof resetPasswordSchema>>({
    resolver: zodResolver(resetPasswordSchema),
    defaultValues: { token, password: '', confirm: '' },
  });
  const { errors, isSubmitting } = form.formState;
  return (
    <form
      noValidate
      className="flex flex-col gap-4"
      onSubmit={form.handleSubmit(async (values) => showActionErrors(await resetPasswordAction(values), form.setError))}
    >
      {errors.root?.message && (
        <FormMessage kind="error">
          {errors.root.message}{' '}
          <Link className="underline" href="/forgot-password">
            Ask for a new link
          </Link>
        </FormMessage>
      )}
      <TextField
        label="New password"
        type="password"
        autoComplete="new-password"
        hint="At least 10 characters. Every other session of yours will be signed out."
        error={errors.password?.message}
        {...form.register('password')}
      />
      <TextField
        label="New password again"
        type="password"
        autoComplete="new-password"
        error={errors.confirm?.message}
        {...form.register('confirm')}
      />
      <Button type="submit" disabled={isSubmitting}>
        {isSubmitting ? 'Saving…' : 'Set the new password'}
      </Button>
    </form>
  );
}
