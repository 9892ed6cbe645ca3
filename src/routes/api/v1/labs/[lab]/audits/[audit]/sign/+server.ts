import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { apiRoute, labFromEvent, readJson } from '$lib/server/api';
import { getAudit } from '$lib/server/audits';
import { signAudit } from '$lib/server/reviews';
import type { RequestHandler } from './$types';

const signBody = z.object({
	password: z.string().min(1, 'Enter your password again to sign.'),
	comment: z.string().max(4000).default(''),
	/** Required (true, with a comment) for an audit with violating cycles. */
	acknowledgeViolation: z.boolean().default(false)
});

/** Signs a submitted audit (a reviewer who is not its author, with their password). */
export const POST: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'review');
	const body = await readJson(event.request, signBody);
	await signAudit(access, event.params.audit, body);
	const { signature, sha256 } = await getAudit(access.lab.id, event.params.audit);
	return json({
		status: 'signed',
		sha256,
		signature: signature && {
			signer: signature.signerName,
			signedAt: signature.signedAt,
			comment: signature.comment,
			sha256: signature.sha256,
			violationAcknowledged: signature.violationAcknowledged,
			keyFingerprint: signature.keyFingerprint
		}
	});
});
