'use client';

import { useState } from 'react';
import { acceptInvitationAction } from '@/app/(auth)/_private/actions';
import { Button } from '@/components/ui/button';
import { FormMessage } from '@/components/ui/field';

export function AcceptInvitationButton({ token }: { token: string }) {
  const [error, setError] = useState<string | null>(null);
  const [pending, setPending] = useState(false);
  return (
    <div className="flex flex-col gap-3">
      {error && <FormMessage kind="error">{error}</FormMessage>}
      <div>
        <Button
          disabled={pending}
          onClick={async () => {
            setPending(true);
            const result = await acceptInvitationAction(token);
            setPending(false);
            if (!result.ok) setError(result.error);
          }}
        >
          Accept and open the workspace
        </Button>
      </div>
    </div>
  );
}
