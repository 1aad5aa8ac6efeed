import 'server-only';
import { redirect } from 'next/navigation';
import { db } from '@/db';
import { unauthorized } from '@/lib/api/errors';
import { userIdForToken } from '@/lib/tokens/access-tokens';
import { findUserRowById, toUser, type User } from '@/lib/users/users';
import { auth } from './index';

export interface Actor {
  user: User;
  via: 'session' | 'token';
}

/** The signed-in person, or null. A session from before a password change no longer counts. */
export async function sessionUser(): Promise<User | null> {
  const session = await auth();
  const id = session?.user?.id;
  if (!id) return null;
  const row = await findUserRowById(db, id);
  if (!row || row.session_version !== session.user.sessionVersion) return null;
  return toUser(row);
}

/** For pages and server actions: the signed-in person, or a redirect to the sign-in page. */
export async function requireUser(returnTo?: string): Promise<User> {
  const user = await sessionUser();
  if (!user) redirect(returnTo ? `/sign-in?callbackUrl=${encodeURIComponent(returnTo)}` : '/sign-in');
  return user;
}

/**
 * For `/api` routes: a bearer token when the request carries one (and then only that), otherwise the
 * session cookie. A token acts with its owner's permissions.
 */
export async function requireActor(request: Request): Promise<Actor> {
  const header = request.headers.get('authorization');
  if (header !== null) {
    const match = /^Bearer\s+(\S+)$/i.exec(header.trim());
    if (!match?.[1]) throw unauthorized('The Authorization header must be "Bearer <token>"');
    const userId = await userIdForToken(db, match[1]);
    const row = userId ? await findUserRowById(db, userId) : undefined;
    if (!row) throw unauthorized('The bearer token is invalid or has been revoked');
    return { user: toUser(row), via: 'token' };
  }
  const user = await sessionUser();
  if (!user) throw unauthorized();
  return { user, via: 'session' };
}
