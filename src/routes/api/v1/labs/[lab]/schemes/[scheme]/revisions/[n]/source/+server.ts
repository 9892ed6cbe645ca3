import { apiRoute, fileResponse, labFromEvent, revisionParam } from '$lib/server/api';
import { getRevisionSource } from '$lib/server/schemes';
import type { RequestHandler } from './$types';

/** The rate table this revision was uploaded from, byte for byte (its SHA-256 in the X-Content-SHA256 header). */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const source = await getRevisionSource(access.lab.id, event.params.scheme, revisionParam(event.params.n));
	const response = fileResponse(source.bytes, source.contentType ?? 'application/octet-stream', source.fileName);
	response.headers.set('x-content-sha256', source.sha256);
	return response;
});
