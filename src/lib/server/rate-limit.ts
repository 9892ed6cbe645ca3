/**
 * Slows down guessing. Every password check (sign-in, signing an audit, changing the password) counts failures on
 * one counter per address: after SIGN_IN_LIMIT.failures within the window, every password check for that address is
 * refused until the window has passed, so a stolen session or API token cannot guess the password through /sign.
 * Sign-in links are limited per address too. The counters live in PostgreSQL (rate-limiter-flexible's
 * RateLimiterPostgres over the table rate_limits, created by a migration), so a restart forgets nothing.
 */
import { error } from '@sveltejs/kit';
import { RateLimiterPostgres, RateLimiterRes, type RateLimiterAbstract } from 'rate-limiter-flexible';
import { pool } from './db';
import { verifyPassword } from './passwords';
import { logActivityForUser, logActivity, withinLogBudget, type ActivityKind } from './activity';

export const SIGN_IN_LIMIT = { failures: 8, windowSeconds: 15 * 60 };
export const LINK_LIMIT = { requests: 3, windowSeconds: 15 * 60 };

const limiters = new Map<string, RateLimiterAbstract>();
function limiter(keyPrefix: string, points: number, duration: number): RateLimiterAbstract {
	let found = limiters.get(keyPrefix);
	if (!found) {
		found = new RateLimiterPostgres({ storeClient: pool, storeType: 'pool', tableName: 'rate_limits', tableCreated: true, keyPrefix, points, duration });
		limiters.set(keyPrefix, found);
	}
	return found;
}
const failures = () => limiter('password', SIGN_IN_LIMIT.failures, SIGN_IN_LIMIT.windowSeconds);
const links = () => limiter('link', LINK_LIMIT.requests, LINK_LIMIT.windowSeconds);

const keyOf = (email: string) => email.trim().toLowerCase().slice(0, 240);

/** Seconds to wait before the address may try a password again, or 0 when it may try now. */
export async function signInBlockedFor(email: string): Promise<number> {
	const state = await failures().get(keyOf(email));
	return state && state.consumedPoints >= SIGN_IN_LIMIT.failures ? Math.max(1, Math.ceil(state.msBeforeNext / 1000)) : 0;
}

export async function recordFailedSignIn(email: string): Promise<void> {
	await failures()
		.consume(keyOf(email))
		.catch((res: unknown) => {
			if (!(res instanceof RateLimiterRes)) throw res;
		});
}

export async function clearFailedSignIns(email: string): Promise<void> {
	await failures().delete(keyOf(email));
}

/** True when another sign-in link may be sent to the address now (and counts this one). */
export async function mayRequestLink(email: string): Promise<boolean> {
	try {
		await links().consume(keyOf(email));
		return true;
	} catch (res) {
		if (res instanceof RateLimiterRes) return false;
		throw res;
	}
}

export type PasswordPurpose = 'sign-in' | 'sign' | 'password-change';
export type PasswordCheck = { ok: true } | { ok: false; waitSeconds: number };

const PURPOSE_WORDS: Record<PasswordPurpose, string> = { 'sign-in': 'sign-in', sign: 'signing an audit', 'password-change': 'password change' };
const PURPOSE_KIND: Record<PasswordPurpose, ActivityKind> = { 'sign-in': 'sign-in-failed', sign: 'sign-failed', 'password-change': 'sign-in-failed' };

/**
 * The one password check of the product, shared by every place that asks for a password: refused while the address
 * is paused; a wrong password counts a failure and is logged. `waitSeconds` > 0: paused (say how long).
 */
export async function checkPassword(
	who: { email: string; userId?: string | null; passwordHash?: string | null },
	password: string,
	purpose: PasswordPurpose
): Promise<PasswordCheck> {
	const wait = await signInBlockedFor(who.email);
	// Paused: the failures that led here are in the log already.
	if (wait > 0) return { ok: false, waitSeconds: wait };
	// An unknown address compares against a dummy hash of the same cost, so both answers take as long.
	if (await verifyPassword(password, who.passwordHash)) {
		await clearFailedSignIns(who.email);
		return { ok: true };
	}
	await recordFailedSignIn(who.email);
	await logFailure(who, purpose, `Wrong password at ${PURPOSE_WORDS[purpose]}`);
	// This attempt was simply wrong; a pause, if reached, applies from the next one.
	return { ok: false, waitSeconds: 0 };
}

/** checkPassword for a JSON or action handler: 429 while paused, 403 for a wrong password. */
export async function requirePassword(
	who: { email: string; userId?: string | null; passwordHash?: string | null },
	password: string,
	purpose: PasswordPurpose,
	wrongMessage = 'That password is not right. Enter your own password.'
): Promise<void> {
	const check = await checkPassword(who, password, purpose);
	if (check.ok) return;
	if (check.waitSeconds > 0) error(429, { message: pausedMessage(check.waitSeconds), code: 'too_many_attempts' });
	error(403, { message: wrongMessage, code: 'bad_password' });
}

export function pausedMessage(waitSeconds: number): string {
	const minutes = Math.max(1, Math.ceil(waitSeconds / 60));
	return `Too many wrong passwords for this address. Wait ${minutes} minute${minutes === 1 ? '' : 's'} before the next try, or sign in with a link by e-mail.`;
}

async function logFailure(who: { email: string; userId?: string | null }, purpose: PasswordPurpose, summary: string): Promise<void> {
	try {
		if (who.userId) await logActivityForUser(who.userId, PURPOSE_KIND[purpose], summary);
		// An unknown address: one line without a lab, and without the address typed (it may be a mistyped password).
		else if (await withinLogBudget('unknown-address')) await logActivity({ labId: null, actorId: null, kind: PURPOSE_KIND[purpose], summary: `${summary} (no such account)`, details: {} });
	} catch (err) {
		console.warn('[escapement] activity: could not log a failed password:', (err as Error).message);
	}
}
