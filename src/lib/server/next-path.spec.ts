import { describe, expect, it } from 'vitest';
import { DEFAULT_NEXT, safeNextPath } from './next-path';

// [trade] open-redirect forms from the OWASP unvalidated-redirects cheat sheet: browsers treat a backslash as a
// slash and ignore tabs and newlines, so each of these would leave the site.
const OFF_SITE = ['//evil.example', '/\\evil.example', '/%5Cevil.example', '/%5cevil.example', '/%2F/evil.example', '/%252F%252Fevil.example', '/\t/evil.example', '/\n/evil.example', 'https://evil.example/', 'javascript:alert(1)', '', ' /labs'];

describe('safeNextPath', () => {
	it.each(OFF_SITE)('refuses %j', (value) => {
		expect(safeNextPath(value)).toBe(DEFAULT_NEXT);
	});
	it('keeps same-site paths with their query and fragment', () => {
		expect(safeNextPath('/labs/kestrel/schemes/new?from=list#top')).toBe('/labs/kestrel/schemes/new?from=list#top');
		expect(safeNextPath('/labs/kestrel?q=a%20b')).toBe('/labs/kestrel?q=a%20b');
	});
	it('refuses an unknown value', () => {
		expect(safeNextPath(null)).toBe(DEFAULT_NEXT);
		expect(safeNextPath('/%E0%A4%A')).toBe(DEFAULT_NEXT);
	});
});
