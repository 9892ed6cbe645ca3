/**
 * Slows down password guessing: after a number of failed sign-ins for one address within a window, further attempts
 * for that address are refused until the window has passed (in this server's memory; a restart forgets).
 */
import { RateLimiterMemory, RateLimiterRes } from 'rate-limiter-flexible';

export const SIGN_IN_LIMIT = { failures: 8, windowSeconds: 15 * 60 };

const failures = new RateLimiterMemory({ points: SIGN_IN_LIMIT.failures, duration: SIGN_IN_LIMIT.windowSeconds, keyPrefix: 'sign-in' });

/** Seconds to wait before the address may try again, or 0 when it may try now. */
export async function signInBlockedFor(email: string): Promise<number> {
	const state = await failures.get(email.toLowerCase());
	return state && state.consumedPoints >= SIGN_IN_LIMIT.failures ? Math.ceil(state.msBeforeNext / 1000) : 0;
}

export async function recordFailedSignIn(email: string): Promise<void> {
	await failures.consume(email.toLowerCase()).catch((res: unknown) => {
		if (!(res instanceof RateLimiterRes)) throw res;
	});
}

export async function clearFailedSignIns(email: string): Promise<void> {
	await failures.delete(email.toLowerCase());
}
