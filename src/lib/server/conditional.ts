/**
 * Conditional GET for stored audits (RFC 9110 §8.8.3, §13.1.2): a strong ETag and If-None-Match. A stored audit's
 * inputs and results never change (a trigger refuses it), so its hash with the review state that does move is a
 * strong validator, known from one small query before anything large is read.
 */
import { createHash } from 'node:crypto';

/** True when an If-None-Match header names this entity tag (or is "*"); a weak "W/" form compares by its value. */
export function etagMatches(ifNoneMatch: string | null, etag: string): boolean {
	if (!ifNoneMatch) return false;
	return ifNoneMatch.split(',').some((tag) => {
		const t = tag.trim();
		return t === '*' || t === etag || t === `W/${etag}`;
	});
}

/** Readers must revalidate every time (the review state moves and access can be withdrawn); nothing is shared. */
export const REVALIDATE = 'private, no-cache';

export function notModified(etag: string): Response {
	return new Response(null, { status: 304, headers: { etag, 'cache-control': REVALIDATE } });
}

/** A short digest to fold the viewer into a page's tag (what a page shows depends on the reader's role). */
export function tagPart(text: string): string {
	return createHash('sha256').update(text).digest('base64url').slice(0, 10);
}
