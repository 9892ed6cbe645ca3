/**
 * Where to go after sign-in: only a path on this site. Browsers read `/\host` and `/%5Chost` as `//host`, and
 * strip tabs and newlines from URLs, so anything with a backslash, a control character or a second leading slash,
 * encoded or not, falls back to the labs list.
 */
export const DEFAULT_NEXT = '/labs';

export function safeNextPath(value: string | null | undefined): string {
	if (!value || value.length > 2000) return DEFAULT_NEXT;
	let decoded = value;
	try {
		// Twice: a path that decodes to a backslash or `//` after one or two rounds is refused as well.
		decoded = decodeURIComponent(decodeURIComponent(value));
	} catch {
		return DEFAULT_NEXT;
	}
	if (/\s/.test(value)) return DEFAULT_NEXT;
	for (const candidate of [value, decoded]) {
		if (!candidate.startsWith('/') || candidate.startsWith('//')) return DEFAULT_NEXT;
		if (/[\\\u0000-\u001f\u007f]/.test(candidate)) return DEFAULT_NEXT;
	}
	const base = 'http://same-site.invalid';
	const resolved = new URL(value, base);
	if (resolved.origin !== base) return DEFAULT_NEXT;
	return resolved.pathname + resolved.search + resolved.hash;
}
