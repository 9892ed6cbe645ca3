/**
 * Sign-in with Auth.js: e-mail and password (Credentials) and sign-in links by e-mail (Nodemailer, through the
 * local SMTP sink in development). Sessions are signed JWT cookies that expire after eight hours.
 */
import { CredentialsSignin, SvelteKitAuth, type SvelteKitAuthConfig } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import Nodemailer from '@auth/sveltekit/providers/nodemailer';
import { DrizzleAdapter } from '@auth/drizzle-adapter';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { db, schema } from './db';
import { config } from './config';
import { verifyPassword } from './passwords';
import { logActivityForUser } from './activity';
import { sendMail } from './mail/send';
import { clearFailedSignIns, recordFailedSignIn, signInBlockedFor } from './rate-limit';

/** Too many failed attempts for this address; the sign-in page says how long to wait. */
class SignInPaused extends CredentialsSignin {
	code = 'paused';
}

const credentialsInput = z.object({ email: z.email(), password: z.string().min(1).max(200) });

export const SESSION_MAX_AGE_S = 8 * 60 * 60;

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
				if ((await signInBlockedFor(email)) > 0) throw new SignInPaused();
				const [user] = await db.select().from(schema.users).where(eq(schema.users.email, email));
				const ok = await verifyPassword(parsed.data.password, user?.passwordHash);
				if (!user || !ok) {
					await recordFailedSignIn(email);
					return null;
				}
				await clearFailedSignIns(email);
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
				await sendMail({
					to: identifier,
					subject: 'Your Escapement sign-in link',
					text: `Someone (we hope you) asked to sign in to Escapement as ${identifier}.\n\nSign in: ${url}\n\nThe link works once, for 30 minutes. If it was not you, ignore this message.`
				});
			}
		})
	],
	callbacks: {
		async signIn({ user, account }) {
			// Sign-in links only for people who already have an account (invited or seeded): no self sign-up.
			if (account?.provider === 'email-link') {
				const email = (user.email ?? '').toLowerCase();
				const [known] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, email));
				return Boolean(known);
			}
			return true;
		},
		jwt({ token, user }) {
			if (user?.id) token.sub = user.id;
			return token;
		},
		session({ session, token }) {
			if (token.sub) session.user.id = token.sub;
			return session;
		}
	},
	events: {
		async signIn({ user, account }) {
			if (user.id) await logActivityForUser(user.id, 'sign-in', `Signed in (${account?.provider === 'email-link' ? 'e-mail link' : 'password'})`);
		}
	}
	};
	return cached;
}

export const { handle: authHandle, signIn, signOut } = SvelteKitAuth(async () => authConfig());
