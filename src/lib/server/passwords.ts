/** Password hashing with bcrypt (bcryptjs): salted, slow on purpose, constant-time comparison. */
import bcrypt from 'bcryptjs';
import { randomBytes } from 'node:crypto';

export const BCRYPT_COST = process.env.ESCAPEMENT_ENV === 'test' ? 8 : 11;

export const MIN_PASSWORD_LENGTH = 10;

export function hashPassword(password: string): Promise<string> {
	return bcrypt.hash(password, BCRYPT_COST);
}

let dummy: string | undefined;
/** A hash of a random password at the same cost as real ones: unknown addresses are checked against it. */
export function dummyHash(): string {
	dummy ??= bcrypt.hashSync(randomBytes(18).toString('base64url'), BCRYPT_COST);
	return dummy;
}

/** The cost factor written in a bcrypt hash (`$2b$11$…` → 11). */
export function hashCost(hash: string): number {
	return Number(/^\$2[aby]\$(\d\d)\$/.exec(hash)?.[1] ?? NaN);
}

export function verifyPassword(password: string, hash: string | null | undefined): Promise<boolean> {
	// Compare against a hash of equal cost when the user has none (or does not exist): both answers take as long.
	const real = hash && Number.isFinite(hashCost(hash)) ? hash : null;
	return bcrypt.compare(password, real ?? dummyHash()).then((ok) => ok && real !== null);
}
