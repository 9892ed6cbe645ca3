import { json } from '@sveltejs/kit';
import { apiRoute, labFromEvent } from '$lib/server/api';
import { auditEtag, auditTagOf, getAudit } from '$lib/server/audits';
import { etagMatches, notModified, REVALIDATE } from '$lib/server/conditional';
import type { RequestHandler } from './$types';

/**
 * A stored audit: its inputs (the scheme as audited), full results, review status, signature and hash. Answers with a
 * strong ETag; a request with a matching If-None-Match gets 304 without the audit being read.
 */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const etag = await auditEtag(access.lab.id, event.params.audit);
	if (etagMatches(event.request.headers.get('if-none-match'), etag)) return notModified(etag);
	const audit = await getAudit(access.lab.id, event.params.audit);
	return json({
		audit: {
			id: audit.id,
			scheme: { id: audit.schemeId, name: audit.schemeName },
			revision: audit.revision,
			status: audit.status,
			verdict: audit.verdict,
			verdictCounts: audit.verdictCounts,
			engineVersion: audit.engineVersion,
			sha256: audit.sha256,
			createdAt: audit.createdAt,
			createdBy: { name: audit.createdByName, email: audit.createdByEmail },
			source: audit.sourceFileName ? { fileName: audit.sourceFileName, sha256: audit.sourceSha256 } : null,
			signature: audit.signature
				? { signer: audit.signature.signerName, signedAt: audit.signature.signedAt, comment: audit.signature.comment, sha256: audit.signature.sha256 }
				: null,
			events: audit.events,
			inputs: audit.inputs,
			results: audit.results
		},
		caution: 'An audit checks the scheme as entered, not the biology behind it.'
	}, { headers: { etag: auditTagOf(audit), 'cache-control': REVALIDATE } });
});
