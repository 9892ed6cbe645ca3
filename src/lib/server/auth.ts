/**
 * Sign-in with Auth.js: e-mail and password (Credentials) and sign-in links by e-mail (Nodemailer, through the
 * local SMTP sink in development). The session cookie is a signed JWT that names a server-side session
 * (sessions.ts), checked on every request. Password checks go through rate-limit.ts's shared throttle.
 */
import { CredentialsSignin, SvelteKitAuth, type SvelteKitAuthConfig } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import Nodemailer from '@auth/sveltekit/providers/nodemailer';
import { DrizzleAdapter } from '@auth/drizzle-adapter';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { db, schema } from './db';
import { config } from './config';
import { logActivityForUser } from './activity';
import { sendMail } from './mail/send';
import { checkPassword, mayRequestLink } from './rate-limit';
import { safeNextPath } from './next-path';
import { endSession, SESSION_MAX_AGE_S, sessionIsLive, startSession } from './sessions';

export { SESSION_MAX_AGE_S };

/**
 * Where a link request goes, whether or not the address has an account: the answer never tells them apart. The
 * same address Auth.js answers after sending a link (it forwards to pages.verifyRequest, /signin/check-mail).
 */
export const CHECK_MAIL_PATH = '/auth/verify-request?provider=email-link&type=email';

/** Too many failed attempts for this address; the sign-in page says how long to wait. */
class SignInPaused extends CredentialsSignin {
	code = 'paused';
}

const credentialsInput = z.object({ email: z.email().max(254), password: z.string().min(1).max(200) });

let cached: SvelteKitAuthConfig | undefined;

/** Built on first request, so that importing this module (e.g. while building) needs no secret. */
function authConfig(): SvelteKitAuthConfig {
	cached ??= {
	adapter: DrizzleAdapter(db, {
		usersTable: schema.users,
		accountsTable: schema.accounts,
		sessionsTable: schema.sessions,
		verificationTokensTable: schema.verificationTokens
	}),
	secret: config.authSecret,
	trustHost: true,
	logger: {
		// A wrong password, an unknown address or a used link are everyday events, not server errors.
		error(err) {
			const type = (err as { type?: string }).type ?? '';
			if (['CredentialsSignin', 'AccessDenied', 'Verification'].includes(type)) console.warn(`[escapement] auth: ${type}`);
			else console.error('[escapement] auth:', err);
		}
	},
	session: { strategy: 'jwt', maxAge: SESSION_MAX_AGE_S },
	pages: { signIn: '/signin', error: '/signin', verifyRequest: '/signin/check-mail' },
	providers: [
		Credentials({
			id: 'password',
			name: 'E-mail and password',
			credentials: { email: { type: 'email' }, password: { type: 'password' } },
			async authorize(raw) {
				const parsed = credentialsInput.safeParse(raw);
				if (!parsed.success) return null;
				const email = parsed.data.email.trim().toLowerCase();
				const [user] = await db.select().from(schema.users).where(eq(schema.users.email, email));
				const check = await checkPassword({ email, userId: user?.id ?? null, passwordHash: user?.passwordHash }, parsed.data.password, 'sign-in');
				if (!check.ok && check.waitSeconds > 0) throw new SignInPaused();
				if (!check.ok || !user) return null;
				return { id: user.id, email: user.email, name: user.name };
			}
		}),
		Nodemailer({
			id: 'email-link',
			name: 'Sign-in link by e-mail',
			server: config.smtpUrl,
			from: config.mailFrom,
			maxAge: 30 * 60,
			async sendVerificationRequest({ identifier, url }) {
				// Not awaited: the answer must not take longer for an address that has an account than for one that
				// has none (that one sends nothing). A failed delivery is logged.
				void sendMail({
					to: identifier,
					subject: 'Your Escapement sign-in link',
					text: `Someone (we hope you) asked to sign in to Escapement as ${identifier}.\n\nSign in: ${url}\n\nThe link works once, for 30 minutes. If it was not you, ignore this message.`
				}).catch((err) => console.error('[escapement] mail: the sign-in link could not be sent:', (err as Error).message));
			}
		})
	],
	callbacks: {
		async signIn({ user, account, email }) {
			// Sign-in links only for people who already have an account (invited or seeded): no self sign-up. An
			// unknown address and a throttled one get the same answer as a sent link.
			if (account?.provider === 'email-link' && email?.verificationRequest) {
				const address = (user.email ?? '').toLowerCase();
				const [known] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, address));
				if (!(await mayRequestLink(address))) return CHECK_MAIL_PATH;
				return known ? true : CHECK_MAIL_PATH;
			}
			if (account?.provider === 'email-link') {
				const [known] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, (user.email ?? '').toLowerCase()));
				return Boolean(known);
			}
			return true;
		},
		redirect({ url, baseUrl }) {
			// Only paths of this site, checked as strictly as the sign-in page's `next`.
			if (url.startsWith(baseUrl)) return baseUrl + safeNextPath(url.slice(baseUrl.length) || '/');
			return baseUrl + safeNextPath(url);
		},
		async jwt({ token, user, account }) {
			if (user?.id) {
				token.sub = user.id;
				token.sid = await startSession(user.id, account?.provider === 'email-link' ? 'email-link' : 'password');
				return token;
			}
			// Every request: the server-side session must still be live (null clears the cookie).
			if (typeof token.sid !== 'string' || typeof token.sub !== 'string' || !(await sessionIsLive(token.sid, token.sub))) return null;
			return token;
		},
		session({ session, token }) {
			if (token.sub) session.user.id = token.sub;
			if (typeof token.sid === 'string') session.sid = token.sid;
			return session;
		}
	},
	events: {
		async signOut(message) {
			const sid = 'token' in message ? message.token?.sid : undefined;
			if (typeof sid === 'string') await endSession(sid);
		},
		async signIn({ user, account }) {
			if (user.id) await logActivityForUser(user.id, 'sign-in', `Signed in (${account?.provider === 'email-link' ? 'e-mail link' : 'password'})`);
		}
	}
	};
	return cached;
}

export const { handle: authHandle, signIn, signOut } = SvelteKitAuth(async () => authConfig());
