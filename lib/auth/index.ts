import 'server-only';
import NextAuth, { CredentialsSignin, type DefaultSession } from 'next-auth';
import Credentials from 'next-auth/providers/credentials';
import Nodemailer from 'next-auth/providers/nodemailer';
import { db } from '@/db';
import { serverEnv } from '@/lib/env';
import { sendMail } from '@/lib/mail/mailer';
import { magicLinkMail } from '@/lib/mail/templates';
import { signInSchema } from '@/lib/validation/auth';
import { findUserRowByEmail, findUserRowById } from '@/lib/users/users';
import { asterismAdapter } from './adapter';
import { checkPasswordSignIn } from './password-sign-in';
import { clientAddress } from './rate-limit';

declare module 'next-auth' {
  interface Session {
    user: { id: string; sessionVersion: number } & DefaultSession['user'];
  }
}

declare module '@auth/core/jwt' {
  interface JWT {
    sessionVersion?: number;
  }
}

export class RateLimitedSignIn extends CredentialsSignin {
  override code = 'rate_limited';
}

export const MAGIC_LINK_MAX_AGE_SECONDS = 30 * 60;
const SESSION_MAX_AGE_SECONDS = 7 * 24 * 60 * 60;

/** Keeps redirects on the host the browser used: Next rewrites 127.0.0.1 to localhost in absolute URLs. */
function relativeRedirect(url: string, baseUrl: string): string {
  if (url.startsWith('/') && !url.startsWith('//')) return url;
  try {
    const target = new URL(url);
    const base = new URL(baseUrl);
    const loopback = (h: string) => h === 'localhost' || h === '127.0.0.1' || h === '[::1]';
    const sameSite = target.origin === base.origin || (loopback(target.hostname) && loopback(base.hostname) && target.port === base.port);
    return sameSite ? `${target.pathname}${target.search}${target.hash}` : '/';
  } catch {
    return '/';
  }
}

export const { handlers, auth, signIn, signOut } = NextAuth(() => {
  const env = serverEnv();
  const secure = env.APP_URL.startsWith('https://');
  return {
    secret: env.AUTH_SECRET,
    trustHost: true,
    adapter: asterismAdapter(db),
    session: { strategy: 'jwt', maxAge: SESSION_MAX_AGE_SECONDS, updateAge: 24 * 60 * 60 },
    useSecureCookies: secure,
    cookies: {
      sessionToken: {
        name: secure ? '__Secure-asterism.session' : 'asterism.session',
        options: { httpOnly: true, sameSite: 'lax', path: '/', secure },
      },
    },
    logger: {
      // A wrong password is an answer, not a server fault: keep it out of the error log.
      error(error) {
        if (error.name === 'CredentialsSignin' || (error as { type?: string }).type === 'CredentialsSignin') return;
        console.error('[auth]', error);
      },
    },
    pages: { signIn: '/sign-in', verifyRequest: '/sign-in/check-email', error: '/sign-in' },
    providers: [
      Credentials({
        credentials: { email: {}, password: {} },
        async authorize(credentials, request) {
          const parsed = signInSchema.safeParse({ email: credentials.email, password: credentials.password });
          if (!parsed.success) return null;
          const result = await checkPasswordSignIn(
            db,
            { ...parsed.data, address: clientAddress(request.headers) },
            {
              maxPerAccount: env.SIGN_IN_MAX_FAILURES_PER_ACCOUNT,
              maxPerAddress: env.SIGN_IN_MAX_FAILURES_PER_ADDRESS,
              windowMinutes: env.SIGN_IN_FAILURE_WINDOW_MINUTES,
            },
          );
          if (!result.ok) {
            if (result.reason === 'rate_limited') throw new RateLimitedSignIn();
            return null;
          }
          return { id: result.user.id, email: result.user.email, name: result.user.name };
        },
      }),
      Nodemailer({
        server: { host: env.SMTP_HOST, port: env.SMTP_PORT, secure: env.SMTP_SECURE },
        from: env.MAIL_FROM,
        maxAge: MAGIC_LINK_MAX_AGE_SECONDS,
        async sendVerificationRequest({ identifier, url }) {
          // The link must open on the public address, whatever host the request came in on.
          const link = new URL(url);
          const base = new URL(env.APP_URL);
          link.protocol = base.protocol;
          link.host = base.host;
          await sendMail(magicLinkMail({ to: identifier, url: link.toString(), minutes: MAGIC_LINK_MAX_AGE_SECONDS / 60 }));
        },
      }),
    ],
    callbacks: {
      async signIn({ user, account, email }) {
        // Magic links only for existing accounts: accounts are made on the sign-up page.
        if (account?.provider === 'nodemailer' && email?.verificationRequest) {
          return Boolean(user.email && (await findUserRowByEmail(db, user.email)));
        }
        return true;
      },
      async jwt({ token, user }) {
        if (user?.id) {
          const row = await findUserRowById(db, user.id);
          token.sub = user.id;
          token.sessionVersion = row?.session_version ?? 0;
        }
        return token;
      },
      session({ session, token }) {
        session.user.id = token.sub ?? '';
        session.user.sessionVersion = token.sessionVersion ?? 0;
        return session;
      },
      redirect({ url, baseUrl }) {
        return relativeRedirect(url, baseUrl);
      },
    },
  };
});
