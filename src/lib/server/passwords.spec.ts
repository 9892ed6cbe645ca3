import { describe, expect, it, vi } from 'vitest';

describe('password checks of unknown addresses', () => {
	// Regression: unknown addresses were compared against a fixed cost-8 hash while real ones have cost 11, so a
	// wrong password answered in 140 ms for a real account and 22 ms for an unknown one [der].
	it.each(['production', 'test'])('compare against a dummy hash of the same bcrypt cost as real hashes (%s)', async (env) => {
		vi.stubEnv('ESCAPEMENT_ENV', env);
		vi.resetModules();
		try {
			const { hashPassword, dummyHash, hashCost, verifyPassword } = await import('./passwords');
			const real = await hashPassword('a-real-password');
			expect(hashCost(dummyHash())).toBe(hashCost(real));
			expect(hashCost(real)).toBe(env === 'production' ? 11 : 8);
			// The dummy never lets anyone in, whatever the password.
			expect(await verifyPassword('a-real-password', null)).toBe(false);
			expect(await verifyPassword('a-real-password', real)).toBe(true);
		} finally {
			vi.unstubAllEnvs();
			vi.resetModules();
		}
	});
});
