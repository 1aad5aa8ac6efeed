import type { Metadata } from 'next';
import { ResetPasswordForm } from '../../_private/account-forms';

export const metadata: Metadata = { title: 'Choose a new password' };

export default async function ResetPasswordPage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  return (
    <div className="border border-rule bg-paper-raised p-6">
      <h2 className="mb-4 text-xl font-semibold">Choose a new password</h2>
      <ResetPasswordForm token={token} />
    </div>
  );
}
