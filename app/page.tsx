import { redirect } from 'next/navigation';
import { sessionUser } from '@/lib/auth/actor';

export default async function Home() {
  redirect((await sessionUser()) ? '/workspaces' : '/sign-in');
}
