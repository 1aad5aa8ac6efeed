import { apiRoute, json } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';

export const GET = apiRoute(async (request) => {
  const { user, via } = await requireActor(request);
  return json({ id: user.id, email: user.email, name: user.name, createdAt: user.createdAt, authenticatedBy: via });
});
