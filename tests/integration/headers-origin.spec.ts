/**
 * Cross-site checks and headers, through hooks.server.ts in-process: token requests (the documented multipart
 * upload) pass without an Origin, cookie and form requests must come from this site; signed-in answers are not
 * cached; the secret file is its owner's only; search text is literal.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeLab } from './db';
import { api, body, tokenFor } from './request';
import { page, signInAs, type CookieJar } from './pages';
import { triangleScheme, triangleWorkbook, upload } from './api-fixtures';
import { stopJobs } from '../../src/lib/server/jobs';
import config from '../../svelte.config.js';

let lab: Awaited<ReturnType<typeof makeLab>>;
let modeller: string;
let jar: CookieJar;
beforeAll(async () => {
	lab = await makeLab(['lead', 'modeller']);
	modeller = await tokenFor(lab.people.modeller.id);
	jar = (await signInAs(lab.people.modeller.email)).jar;
});
afterAll(async () => {
	await stopJobs();
});

describe('cross-site requests', () => {
	it("SvelteKit's own origin check is off (it refused the documented token upload); hooks.server.ts checks instead", () => {
		expect(config.kit?.csrf?.trustedOrigins).toEqual(['*']);
	});

	// Regression: a multipart upload with only a bearer token got 403 from the framework's cross-site form check.
	it('accepts the documented multipart upload with only a bearer token and no Origin', async () => {
		const res = await api('POST', `/api/v1/labs/${lab.lab.slug}/schemes`, { token: modeller, form: upload(await triangleWorkbook(), 'triangle.xlsx', { name: 'Uploaded by script' }) });
		expect(res.status).toBe(201);
	});

	it('refuses a form action posted from another origin, or with no Origin, with the session cookie [trade]', async () => {
		const foreign = await page('POST', '/account?/createToken', { jar, origin: 'https://evil.example', form: { name: 'planted', lifetime: '30' } });
		expect(foreign.status).toBe(403);
		const none = await page('POST', '/account?/createToken', { jar, origin: null, form: { name: 'planted', lifetime: '30' } });
		expect(none.status).toBe(403);
		const own = await page('POST', '/account?/createToken', { jar, form: { name: 'mine', lifetime: '30' } });
		expect(own.status).toBe(200);
	});

	it('refuses a foreign sign-in form (login cross-site request forgery)', async () => {
		const res = await page('POST', '/signin', { origin: 'https://evil.example', form: { providerId: 'password', email: lab.people.modeller.email, password: 'x' } });
		expect(res.status).toBe(403);
	});

	it('refuses a cookie-carrying JSON POST from another origin', async () => {
		const res = await page('POST', `/api/v1/labs/${lab.lab.slug}/schemes`, {
			jar,
			origin: 'https://evil.example',
			body: { bytes: JSON.stringify({ name: 'x', scheme: triangleScheme('x') }), type: 'application/json' }
		});
		expect(res.status).toBe(403);
		expect((await body<any>(res)).error.code).toBe('cross_site');
	});
});

describe('headers', () => {
	it('signed-in pages are not stored by any cache [trade]', async () => {
		const res = await page('GET', '/account', { jar });
		expect(res.status).toBe(200);
		expect(res.headers.get('cache-control')).toMatch(/no-store/);
	});
	it('a Content-Security-Policy allows scripts only from the site', () => {
		const directives = config.kit?.csp?.directives ?? {};
		expect(directives['script-src']).toEqual(['self']);
		expect(directives['object-src']).toEqual(['none']);
		expect(directives['frame-ancestors']).toEqual(['none']);
	});
});

describe('the secret file', () => {
	it('is readable and writable by its owner only (mode 600) [trade]', () => {
		const root = mkdtempSync(join(tmpdir(), 'esc-secret-'));
		execFileSync('bash', ['-c', `source scripts/lib.sh; ROOT="$1"; ensure_secret; chmod 644 "$1/.data/auth-secret"; ensure_secret`, '_', root]);
		expect(statSync(join(root, '.data/auth-secret')).mode & 0o777).toBe(0o600);
	});
});

describe('search', () => {
	it('treats % and _ as literal characters, not wildcards [trade]', async () => {
		for (const name of ['Yield 100% kinesin', 'Yield 1000 kinesin', 'Rate_fit dynein', 'Ratefit dynein'])
			expect((await api('POST', `/api/v1/labs/${lab.lab.slug}/schemes`, { token: modeller, json: { name, scheme: triangleScheme(name) } })).status).toBe(201);
		const names = async (q: string) =>
			((await body<any>(await api('GET', `/api/v1/labs/${lab.lab.slug}/schemes?q=${encodeURIComponent(q)}`, { token: modeller }))).schemes as { name: string }[]).map((s) => s.name).sort();
		expect(await names('100%')).toEqual(['Yield 100% kinesin']);
		expect(await names('%')).toEqual(['Yield 100% kinesin']);
		expect(await names('Rate_fit')).toEqual(['Rate_fit dynein']);
	});
	it('answers 400 naming the field for ?page=1e308', async () => {
		const res = await api('GET', `/api/v1/labs/${lab.lab.slug}/schemes?page=1e308`, { token: modeller });
		expect(res.status).toBe(400);
		expect(JSON.stringify(await body(res))).toMatch(/page/);
		const html = await page('GET', `/labs/${lab.lab.slug}?page=1e308`, { jar });
		expect(html.status).toBe(200);
	});
});
