import { error } from '@sveltejs/kit';
import { requireLab, requireUserPage } from '$lib/server/access';
import { getRevisionSource } from '$lib/server/schemes';
import type { RequestHandler } from './$types';

/** The file a revision was uploaded from, byte for byte, with its SHA-256 in a header. */
export const GET: RequestHandler = async ({ locals, params, url }) => {
	const user = requireUserPage(locals, url);
	const { lab } = await requireLab(user, params.lab, 'read');
	const n = Number(params.n);
	if (!Number.isInteger(n) || n < 1) error(404, { message: `There is no revision "${params.n}"; revisions are numbered 1, 2, 3, …`, code: 'not_found' });
	const source = await getRevisionSource(lab.id, params.scheme, n);
	const asciiName = source.fileName.replace(/[^\x20-\x7e]/g, '_').replace(/["\\]/g, '_');
	return new Response(source.bytes as BodyInit, {
		headers: {
			'content-type': source.contentType ?? 'application/octet-stream',
			'content-disposition': `attachment; filename="${asciiName}"; filename*=UTF-8''${encodeURIComponent(source.fileName)}`,
			'content-length': String(source.bytes.byteLength),
			'x-content-sha256': source.sha256,
			'cache-control': 'private, no-store',
			'x-content-type-options': 'nosniff'
		}
	});
};
