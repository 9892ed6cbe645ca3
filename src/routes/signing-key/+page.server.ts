import { groupedFingerprint, serverKey } from '$lib/server/signing';
import type { PageServerLoad } from './$types';

/** The public half of the server's signing key, for anyone who checks a signed record or a PDF report. */
export const load: PageServerLoad = () => {
	const key = serverKey();
	return { publicKeyPem: key.publicKeyPem, fingerprint: key.fingerprint, grouped: groupedFingerprint(key.fingerprint) };
};
