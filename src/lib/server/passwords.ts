/** Password hashing with bcrypt (bcryptjs): salted, slow on purpose, constant-time comparison. */
import bcrypt from 'bcryptjs';

const COST = process.env.ESCAPEMENT_ENV === 'test' ? 8 : 11;

export const MIN_PASSWORD_LENGTH = 10;

export function hashPassword(password: string): Promise<string> {
	return bcrypt.hash(password, COST);
}

export function verifyPassword(password: string, hash: string | null | undefined): Promise<boolean> {
	// Compare against a fixed hash when the user has none, so both paths take about the same time.
	return bcrypt.compare(password, hash ?? '$2b$08$C6UzMDM.H6dfI/f/IKcEeO5v0bBGmPpiL6iIuhfZ8YPhq1Jp9V3ne');
}
