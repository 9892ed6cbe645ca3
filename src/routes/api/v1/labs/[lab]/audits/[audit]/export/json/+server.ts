import { json } from '@sveltejs/kit';
import { apiRoute, auditFileStem, labFromEvent } from '$lib/server/api';
import { getAudit, provenanceOf, verifyAudit } from '$lib/server/audits';
import type { RequestHandler } from './$types';

/** The audit as one JSON document to keep: provenance, signature, the scheme as audited and the full results. */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const audit = await getAudit(access.lab.id, event.params.audit);
	const fileName = `${auditFileStem(audit.schemeName, audit.revision)}-audit.json`;
	const ascii = fileName.replace(/[^\x20-\x7e]/g, '_').replace(/["\\]/g, '_');
	return json(
		{
			lab: access.lab.name,
			scheme: audit.schemeName,
			revision: audit.revision,
			status: audit.status,
			provenance: provenanceOf(audit),
			signature: audit.signature
				? { signer: audit.signature.signerName, signedAt: audit.signature.signedAt, comment: audit.signature.comment, sha256: audit.signature.sha256 }
				: null,
			verification: await verifyAudit(audit),
			caution: 'An audit checks the scheme as entered, not the biology behind it.',
			inputs: audit.inputs,
			results: audit.results
		},
		{ headers: { 'content-disposition': `attachment; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(fileName)}` } }
	);
});
