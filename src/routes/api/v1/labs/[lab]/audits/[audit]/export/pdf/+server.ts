import { apiRoute, auditFileStem, fileResponse, labFromEvent } from '$lib/server/api';
import { getAudit, provenanceOf } from '$lib/server/audits';
import { auditPdf } from '$lib/server/sheets/export-pdf';
import { config } from '$lib/server/config';
import type { RequestHandler } from './$types';

/** The PDF report; a signed audit carries its signature block (signer, time, comment, SHA-256, server key). */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const audit = await getAudit(access.lab.id, event.params.audit);
	const signature = audit.signature
		? {
				signer: audit.signature.signerName,
				signedAt: audit.signature.signedAt.toISOString(),
				comment: audit.signature.comment,
				sha256: audit.signature.sha256,
				violationAcknowledged: audit.signature.violationAcknowledged,
				keyFingerprint: audit.signature.keyFingerprint,
				publicKeyUrl: `${config.origin}/signing-key`
			}
		: null;
	const bytes = await auditPdf(audit.results, audit.inputs, provenanceOf(audit), signature);
	return fileResponse(bytes, 'application/pdf', `${auditFileStem(audit.schemeName, audit.revision)}-audit.pdf`);
});
