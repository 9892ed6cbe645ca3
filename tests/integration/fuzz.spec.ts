/**
 * Property-based fuzzing with fast-check, in-process through hooks.server.ts (tests/integration/request.ts and
 * pages.ts): generated hostile inputs — lone surrogates, NUL, bidi overrides, look-alike letters, reserved object
 * keys, LIKE wildcards, formula text, over-long strings, 1e308 and other extreme numbers, wrong types, nesting,
 * malformed multipart — against the rate-table import, every JSON body of the API and every form action.
 * Properties: no answer is a 5xx, and a refused request writes nothing (the lab's row counts before and after).
 * FUZZ_RUNS (default 1000) inputs per target (the import, multipart bodies, the JSON bodies of all routes, the forms of
 * all actions); FUZZ_SEED fixes the seed, which fast-check prints with the smallest failing input.
 */
import fc from 'fast-check';
import { sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { db, makeLab } from './db';
import { api, body, tokenFor } from './request';
import { CookieJar, page, signInAs } from './pages';
import { triangleScheme, triangleWorkbook } from './api-fixtures';
import { importRateTable } from '../../src/lib/server/sheets';
import { stopJobs } from '../../src/lib/server/jobs';

const RUNS = Number(process.env.FUZZ_RUNS ?? 1000);
const SEED = Number(process.env.FUZZ_SEED ?? 20261203);
const TIMEOUT = 600_000;

// ---------------------------------------------------------------- hostile values

const NASTY = [
	'\u0000', 'a\u0000b', '\ud800', 'x\udfffy', '__proto__', 'constructor', 'toString', 'hasOwnProperty', 'prototype',
	'%', '_', '%_%', '\\', '\u202e', 'safe\u202egnp.exe', '\u2066x\u2069', '\u0410', 'E\u0031', '\u200b', '\ufeff',
	'=1+1', '+cmd|calc', '-2+3', '@SUM(A1:A9)', '\t=x', "' OR 1=1 --", '"; DROP TABLE schemes; --', '<script>alert(1)</script>',
	'../../etc/passwd', '1e308', '-1e308', 'NaN', 'Infinity', '0x10', '1,5', '', ' ', 'E1', 'ATP', 'lead', 'yes'
];
const hostileString = fc.oneof(
	{ weight: 3, arbitrary: fc.constantFrom(...NASTY) },
	{ weight: 2, arbitrary: fc.string({ unit: 'binary', maxLength: 30 }) },
	{ weight: 1, arbitrary: fc.string({ minLength: 190, maxLength: 600 }) },
	{ weight: 1, arbitrary: fc.tuple(fc.constantFrom(...NASTY), fc.string({ maxLength: 10 })).map(([a, b]) => a + b) }
);
const hostileNumber = fc.oneof(fc.double(), fc.constantFrom(1e308, -1e308, 5e-324, -0, 2 ** 53 + 1, 1e21, -1), fc.integer());
const hostileValue: fc.Arbitrary<unknown> = fc.oneof(
	{ weight: 4, arbitrary: hostileString },
	{ weight: 3, arbitrary: hostileNumber },
	{ weight: 1, arbitrary: fc.boolean() },
	{ weight: 1, arbitrary: fc.constant(null) },
	{ weight: 1, arbitrary: fc.array(hostileString, { maxLength: 4 }) },
	{ weight: 1, arbitrary: fc.dictionary(hostileString, hostileString, { maxKeys: 3 }) }
);

const SCHEME_PATHS = [
	'name', 'format', 'temperatureK', 'forcePN', 'stepSizeNm', 'concentrationsM', 'concentrationsM.*', 'reactions', 'reactions.0', 'states',
	'states.0', 'states.0.id', 'states.1.label', 'states.2.id', 'steps', 'steps.0', 'steps.0.id', 'steps.0.from', 'steps.1.to', 'steps.0.kForward',
	'steps.2.kBackward', 'steps.0.binds', 'steps.1.releases', 'steps.0.binds.0', 'steps.0.loadFraction', 'steps.1.displacementNm', 'steps.2.relUncertaintyForward'
];

/** The triangle scheme with one to three fields replaced by hostile values (keys too, for maps). */
const hostileScheme = fc.array(fc.record({ path: fc.constantFrom(...SCHEME_PATHS), value: hostileValue, key: hostileString }), { minLength: 1, maxLength: 3 }).map((edits) => {
	const scheme = JSON.parse(JSON.stringify(triangleScheme('Fuzz'))) as Record<string, any>;
	for (const { path, value, key } of edits) {
		const parts = path.split('.');
		let at: any = scheme;
		for (const p of parts.slice(0, -1)) {
			if (at === null || typeof at !== 'object') break;
			at = at[p] ?? (at[p] = {});
		}
		if (at === null || typeof at !== 'object') continue;
		const last = parts[parts.length - 1];
		if (last === '*') {
			at[key] = value;
			if (Array.isArray(scheme.steps?.[0]?.binds)) scheme.steps[0].binds.push(key);
		} else at[last] = value;
	}
	return scheme;
});

const hostileObject = (fields: string[], extra: Record<string, fc.Arbitrary<unknown>> = {}) =>
	fc.oneof(
		{ weight: 6, arbitrary: fc.record(Object.fromEntries([...fields.map((f) => [f, hostileValue] as const), ...Object.entries(extra)]), { requiredKeys: [] }) },
		{ weight: 1, arbitrary: hostileValue },
		{ weight: 1, arbitrary: fc.dictionary(hostileString, hostileValue, { maxKeys: 4 }) }
	);

// ---------------------------------------------------------------- the lab and its row counts

let lab: Awaited<ReturnType<typeof makeLab>>;
let tokens: Record<'lead' | 'modeller' | 'reviewer', string>;
let jars: Record<'lead' | 'modeller' | 'reviewer', CookieJar>;
let schemeId: string;
let draft: string;
let submitted: string;

async function labCounts(): Promise<string> {
	const id = lab.lab.id;
	const users = Object.values(lab.people).map((p) => p.id);
	const { rows } = await db.execute(sql`select
		(select count(*) from schemes where lab_id = ${id}) as schemes,
		(select count(*) from scheme_revisions r join schemes s on s.id = r.scheme_id where s.lab_id = ${id}) as revisions,
		(select count(*) from audits where lab_id = ${id}) as audits,
		(select count(*) from review_events e join audits a on a.id = e.audit_id where a.lab_id = ${id}) as events,
		(select count(*) from signatures g join audits a on a.id = g.audit_id where a.lab_id = ${id}) as signatures,
		(select count(*) from lab_members where lab_id = ${id}) as members,
		(select count(*) from invitations where lab_id = ${id}) as invitations,
		(select count(*) from api_tokens where user_id in (${sql.join(users.map((u) => sql`${u}`), sql`, `)})) as tokens,
		(select string_agg(status::text, ',' order by id) from audits where lab_id = ${id}) as statuses,
		(select string_agg(password_hash, ',' order by id) from users where id in (${sql.join(users.map((u) => sql`${u}`), sql`, `)})) as passwords`);
	return JSON.stringify(rows[0]);
}

const tally = { inputs: 0, status: new Map<number, number>() };

/** One hostile request: never a 5xx, and a refusal (4xx) leaves every count as it was. */
async function probe(send: () => Promise<Response>, what: string): Promise<void> {
	const before = await labCounts();
	const res = await send();
	const status = res.status;
	tally.inputs++;
	tally.status.set(status, (tally.status.get(status) ?? 0) + 1);
	if (status >= 500) throw new Error(`${what}: answered ${status} ${(await res.text()).slice(0, 300)}`);
	await res.body?.cancel();
	if (status >= 400) {
		const after = await labCounts();
		if (after !== before) throw new Error(`${what}: answered ${status} but wrote: ${before} → ${after}`);
	}
}

/** RUNS generated inputs through `check`; fast-check prints the seed and the smallest failing input. */
async function run<T>(arb: fc.Arbitrary<T>, check: (value: T) => Promise<void>): Promise<void> {
	let tried = 0;
	await fc.assert(
		fc.asyncProperty(arb, async (value) => {
			tried++;
			await check(value);
		}),
		{ numRuns: RUNS, seed: SEED, endOnFailure: true }
	);
	expect(tried).toBeGreaterThanOrEqual(RUNS);
}

beforeAll(async () => {
	lab = await makeLab(['lead', 'modeller', 'reviewer']);
	tokens = { lead: await tokenFor(lab.people.lead.id), modeller: await tokenFor(lab.people.modeller.id), reviewer: await tokenFor(lab.people.reviewer.id) };
	const created = await api('POST', `/api/v1/labs/${lab.lab.slug}/schemes`, { token: tokens.modeller, json: { name: 'Fuzz target', scheme: triangleScheme('Fuzz target') } });
	schemeId = (await body<any>(created)).scheme.id;
	const audit = async () => (await body<any>(await api('POST', `/api/v1/labs/${lab.lab.slug}/schemes/${schemeId}/audits`, { token: tokens.modeller, json: {} }))).audit.id as string;
	draft = await audit();
	submitted = await audit();
	await api('POST', `/api/v1/labs/${lab.lab.slug}/audits/${submitted}/submit`, { token: tokens.modeller, json: { note: 'fuzz' } });
	jars = { lead: (await signInAs(lab.people.lead.email)).jar, modeller: (await signInAs(lab.people.modeller.email)).jar, reviewer: (await signInAs(lab.people.reviewer.email)).jar };
}, 60_000);
afterAll(async () => {
	const rows = [...tally.status].sort((a, b) => a[0] - b[0]).map(([s, n]) => `${s}: ${n}`).join(', ');
	console.log(`[fuzz] ${tally.inputs} requests (seed ${SEED}, ${RUNS} per target); answers ${rows}`);
	await stopJobs();
});

// ---------------------------------------------------------------- targets

describe('the rate-table import', () => {
	it(`reads ${RUNS} hostile CSV and workbook files without a crash, and the API refuses them without a write`, { timeout: TIMEOUT }, async () => {
		const book = await triangleWorkbook();
		const csvFile = fc.array(fc.array(fc.oneof(hostileString, hostileNumber.map(String)), { maxLength: 9 }), { maxLength: 8 }).map((rows) => {
			const lines = ['# scheme name: Fuzz', 'step,from state,to state,rate (1/s or 1/(M·s)),binds,releases', ...rows.map((r) => r.map((c) => `"${c.replace(/"/g, '""')}"`).join(','))];
			return { bytes: new TextEncoder().encode(lines.join('\r\n')), name: 'fuzz.csv' };
		});
		// A real workbook with bytes flipped or cut, and names of every kind.
		const brokenBook = fc.record({ at: fc.nat(book.length - 1), flips: fc.uint8Array({ minLength: 1, maxLength: 16 }), cut: fc.option(fc.nat(book.length), { nil: undefined }), name: fc.constantFrom('fuzz.xlsx', 'fuzz.xlsm', 'fuzz.csv', 'fuzz', 'fuzz.xls', '..\\fuzz.xlsx') }).map(({ at, flips, cut, name }) => {
			const bytes = book.slice(0, cut ?? book.length);
			flips.forEach((b, i) => at + i < bytes.length && (bytes[at + i] ^= b || 1));
			return { bytes, name };
		});
		const rawBytes = fc.record({ bytes: fc.uint8Array({ maxLength: 2000 }), name: fc.constantFrom('x.xlsx', 'x.csv', 'x.tsv') });
		await run(fc.oneof(csvFile, brokenBook, rawBytes), async ({ bytes, name }) => {
			const result = await importRateTable(bytes, name);
			if (!result.ok) for (const e of result.errors) expect(e.message.length).toBeLessThan(1000);
			const form = new FormData();
			form.set('file', new File([bytes as BlobPart], name));
			await probe(() => api('POST', `/api/v1/labs/${lab.lab.slug}/schemes`, { token: tokens.modeller, form }), `upload ${name}`);
		});
	});

	it(`answers ${RUNS} malformed multipart bodies with a 4xx`, { timeout: TIMEOUT }, async () => {
		const multipart = fc.record({ boundary: fc.constantFrom('b', 'x'.repeat(70), ''), body: fc.string({ unit: 'binary', maxLength: 300 }), prefix: fc.constantFrom('--b\r\n', '--b\r\nContent-Disposition: form-data; name="file"; filename="t.xlsx"\r\n\r\n', '') });
		await run(multipart, async ({ boundary, body: text, prefix }) => {
			await probe(() => page('POST', `/api/v1/labs/${lab.lab.slug}/schemes`, { token: tokens.modeller, body: { bytes: prefix + text, type: `multipart/form-data; boundary=${boundary}` } }), 'multipart');
		});
	});
});

describe('every JSON body of the API', () => {
	const L = () => `/api/v1/labs/${lab.lab.slug}`;
	const targets: { name: string; who: keyof typeof tokens; path: () => string; body: fc.Arbitrary<unknown> }[] = [
		{ name: 'POST /schemes', who: 'modeller', path: () => `${L()}/schemes`, body: hostileObject(['name', 'description', 'note'], { scheme: hostileScheme }) },
		{ name: 'POST /schemes/[scheme]/revisions', who: 'modeller', path: () => `${L()}/schemes/${schemeId}/revisions`, body: hostileObject(['note'], { scheme: hostileScheme }) },
		{ name: 'POST /schemes/[scheme]/preview', who: 'modeller', path: () => `${L()}/schemes/${schemeId}/preview`, body: fc.oneof(hostileScheme, hostileObject(['scheme', 'conditions'], { scheme: hostileScheme })) },
		{ name: 'POST /schemes/[scheme]/audits', who: 'modeller', path: () => `${L()}/schemes/${schemeId}/audits`, body: hostileObject(['revision'], { conditions: hostileObject(['temperatureK', 'forcePN', 'concentrationsM']) }) },
		{ name: 'POST /audits/[audit]/submit', who: 'modeller', path: () => `${L()}/audits/${draft}/submit`, body: hostileObject(['note']) },
		{ name: 'POST /audits/[audit]/return', who: 'reviewer', path: () => `${L()}/audits/${submitted}/return`, body: hostileObject(['comment']).filter((b) => !(b && typeof b === 'object' && typeof (b as any).comment === 'string' && (b as any).comment.trim())) },
		{ name: 'POST /audits/[audit]/sign', who: 'reviewer', path: () => `${L()}/audits/${submitted}/sign`, body: hostileObject(['password', 'comment', 'acknowledgeViolation']) },
		{ name: 'POST /audits/[audit]/adopt-correction', who: 'modeller', path: () => `${L()}/audits/${draft}/adopt-correction`, body: hostileObject(['note']) }
	];
	it(`${RUNS} hostile bodies spread over the ${targets.length} JSON routes: no 5xx, no write when refused`, { timeout: TIMEOUT }, async () => {
		const perRoute = new Map<string, number>();
		await run(fc.oneof(...targets.map((t) => t.body.map((json) => ({ t, json })))), async ({ t, json }) => {
			perRoute.set(t.name, (perRoute.get(t.name) ?? 0) + 1);
			await probe(() => api('POST', t.path(), { token: tokens[t.who], json: json === undefined ? null : json }), t.name);
		});
		// Every route got its share.
		expect([...perRoute.keys()].sort()).toEqual(targets.map((t) => t.name).sort());
		console.log(`[fuzz] JSON bodies per route: ${[...perRoute].map(([k, n]) => `${k} ${n}`).join(', ')}`);
	});
});

describe('every form action', () => {
	const L = () => `/labs/${lab.lab.slug}`;
	const fields = (names: string[]) =>
		fc.dictionary(fc.oneof({ weight: 4, arbitrary: fc.constantFrom(...names) }, { weight: 1, arbitrary: hostileString }), fc.oneof(hostileString, hostileNumber.map(String)), { maxKeys: names.length + 2 });
	const targets: { name: string; who: keyof typeof jars | null; path: () => string; fields: string[] }[] = [
		{ name: '/signin', who: null, path: () => '/signin', fields: ['providerId', 'email', 'password', 'redirectTo'] },
		{ name: '/invite/[token]', who: null, path: () => '/invite/no-such-token', fields: ['name', 'password'] },
		{ name: '/account ?/createToken', who: 'modeller', path: () => '/account?/createToken', fields: ['name', 'lifetime'] },
		{ name: '/account ?/revokeToken', who: 'modeller', path: () => '/account?/revokeToken', fields: ['id'] },
		{ name: '/account ?/changePassword', who: 'lead', path: () => '/account?/changePassword', fields: ['current', 'next', 'confirm'] },
		{ name: 'members ?/invite', who: 'lead', path: () => `${L()}/members?/invite`, fields: ['email', 'role'] },
		{ name: 'members ?/role', who: 'lead', path: () => `${L()}/members?/role`, fields: ['userId', 'role'] },
		{ name: 'members ?/remove', who: 'lead', path: () => `${L()}/members?/remove`, fields: ['userId'] },
		{ name: 'schemes/new ?/upload', who: 'modeller', path: () => `${L()}/schemes/new?/upload`, fields: ['sheet', 'name', 'description'] },
		{ name: 'schemes/new ?/empty', who: 'modeller', path: () => `${L()}/schemes/new?/empty`, fields: ['name', 'description', 'scheme'] },
		{ name: 'schemes/[scheme] ?/run', who: 'modeller', path: () => `${L()}/schemes/${schemeId}?/run`, fields: ['temperatureK', 'forcePN', 'revision', 'stepSizeNm'] },
		{ name: 'schemes/[scheme] ?/save', who: 'modeller', path: () => `${L()}/schemes/${schemeId}?/save`, fields: ['note', 'scheme'] },
		{ name: 'audits/[audit] ?/submit', who: 'modeller', path: () => `${L()}/audits/${draft}?/submit`, fields: ['note'] },
		{ name: 'audits/[audit] ?/sign', who: 'reviewer', path: () => `${L()}/audits/${submitted}?/sign`, fields: ['password', 'comment', 'acknowledgeViolation'] },
		{ name: 'audits/[audit] ?/return', who: 'reviewer', path: () => `${L()}/audits/${submitted}?/return`, fields: ['comment'] },
		{ name: 'audits/[audit] ?/adopt', who: 'modeller', path: () => `${L()}/audits/${draft}?/adopt`, fields: ['note'] },
		{ name: 'audits/[audit] ?/verify', who: 'modeller', path: () => `${L()}/audits/${draft}?/verify`, fields: ['note'] },
		{ name: 'jobs/[job] ?/cancel', who: 'modeller', path: () => `${L()}/jobs/00000000-0000-4000-8000-000000000000?/cancel`, fields: ['id'] }
	];
	it(`${RUNS} hostile forms spread over the ${targets.length} form actions: no 5xx, no write when refused`, { timeout: TIMEOUT }, async () => {
		const scheme = hostileScheme.map((x) => JSON.stringify(x));
		const perAction = new Map<string, number>();
		const input = fc.oneof(...targets.map((t) => fc.tuple(fc.constant(t), fields(t.fields), fc.option(scheme, { nil: undefined }))));
		await run(input, async ([t, values, schemeText]) => {
			perAction.set(t.name, (perAction.get(t.name) ?? 0) + 1);
			// A return with a real comment may rightly write; everything refused must not.
			if (t.name.endsWith('?/return') && (values.comment ?? '').trim()) delete values.comment;
			const form = { ...values, ...(schemeText && t.fields.includes('scheme') ? { scheme: schemeText } : {}) };
			await probe(() => page('POST', t.path(), { jar: t.who ? jars[t.who] : undefined, form }), t.name);
		});
		expect([...perAction.keys()].sort()).toEqual(targets.map((t) => t.name).sort());
		console.log(`[fuzz] forms per action: ${[...perAction].map(([k, n]) => `${k} ${n}`).join(', ')}`);
	});
});
