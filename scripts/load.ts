/**
 * npm run load (through scripts/load.sh, which starts a throwaway cluster and the built app on loopback):
 * LOAD_CONNECTIONS clients (50) for LOAD_SECONDS (60) read a stored audit (page data with a session cookie, the JSON
 * API with a token), the scheme list and a preview, while one heavy audit after another runs; the health check is
 * probed idle, during a heavy audit alone and under the load. Prints latency percentiles, errors and non-2xx per
 * target as a table, and the aims as ratios. Loopback only; every phase is bounded in time.
 */
import autocannon, { type Instance, type Options, type Result } from 'autocannon';
import { execSync } from 'node:child_process';
import { availableParallelism } from 'node:os';
import { eq } from 'drizzle-orm';
import { createApiToken } from '../src/lib/server/api-tokens';
import { closeDb, db, schema } from '../src/lib/server/db/index';
import { DEMO_LAB, DEMO_PASSWORD, DEMO_USERS } from '../src/lib/server/demo/seed';
import { randomScheme } from '../src/lib/engine/random-scheme';

const BASE = process.env.LOAD_BASE_URL ?? 'http://127.0.0.1:5200';
if (!/^http:\/\/(127\.0\.0\.1|localhost|\[::1\]):\d+$/.test(BASE)) throw new Error(`load: ${BASE} is not a loopback address; the load test runs on loopback only`);
const SECONDS = Math.min(Math.max(Number(process.env.LOAD_SECONDS ?? 60) || 60, 5), 600);
const CONNECTIONS = Math.min(Math.max(Number(process.env.LOAD_CONNECTIONS ?? 50) || 50, 4), 500);
const IDLE_SECONDS = 5;
const LAB = DEMO_LAB.slug;
const MODELLER = DEMO_USERS[1];

// ------------------------------------------------------------------ set-up: a cookie, a token, the schemes

async function signInCookie(email: string): Promise<string> {
	const body = new URLSearchParams({ providerId: 'password', redirectTo: '/labs', email, password: DEMO_PASSWORD });
	const res = await fetch(`${BASE}/signin`, {
		method: 'POST',
		body,
		redirect: 'manual',
		headers: { origin: BASE, 'content-type': 'application/x-www-form-urlencoded' }
	});
	const cookies = res.headers.getSetCookie().map((c) => c.split(';')[0]);
	const session = cookies.find((c) => /session-token=/.test(c));
	if (!session) throw new Error(`load: signing in as ${email} set no session cookie (status ${res.status})`);
	return cookies.join('; ');
}

async function call(method: 'GET' | 'POST', path: string, token: string, json?: unknown): Promise<Response> {
	const res = await fetch(`${BASE}${path}`, {
		method,
		headers: { authorization: `Bearer ${token}`, ...(json === undefined ? {} : { 'content-type': 'application/json' }) },
		body: json === undefined ? undefined : JSON.stringify(json)
	});
	if (res.status >= 400) throw new Error(`load: ${method} ${path} answered ${res.status}: ${(await res.text()).slice(0, 300)}`);
	return res;
}

async function createScheme(token: string, name: string, scheme: object): Promise<string> {
	const res = await call('POST', `/api/v1/labs/${LAB}/schemes`, token, { name, scheme: { ...scheme, name } });
	return ((await res.json()) as { scheme: { id: string } }).scheme.id;
}

/**
 * Runs one audit and waits for it: a 201 is done; a 202 is a job (past the work budget, worked by the worker
 * process), followed at its url until it is done. Each heavy audit gets its own load, so no stored result is reused.
 */
async function audit(token: string, schemeId: string, conditions?: object): Promise<{ id: string | null; ms: number; job: boolean }> {
	const t0 = performance.now();
	const res = await call('POST', `/api/v1/labs/${LAB}/schemes/${schemeId}/audits`, token, conditions ? { conditions } : undefined);
	if (res.status === 202) {
		let { job } = (await res.json()) as { job: { status: string; url: string; auditId: string | null; error: string | null } };
		const deadline = t0 + 600_000;
		while (job.status !== 'done' && job.status !== 'failed' && performance.now() < deadline) {
			await new Promise((r) => setTimeout(r, 250));
			job = ((await (await call('GET', job.url, token)).json()) as { job: typeof job }).job;
		}
		if (job.status !== 'done') throw new Error(`load: the audit job ended ${job.status}: ${job.error ?? 'no result within 10 minutes'}`);
		return { id: job.auditId, ms: performance.now() - t0, job: true };
	}
	const body = (await res.json()) as { audit?: { id?: string } };
	return { id: body.audit?.id ?? null, ms: performance.now() - t0, job: false };
}
let heavyRuns = 0;
const heavyConditions = () => ({ forcePN: 0.25 * ++heavyRuns });

// ------------------------------------------------------------------ measuring

interface Measured {
	name: string;
	clients: number;
	latencies: number[];
	statuses: Map<number, number>;
	errors: number;
	timeouts: number;
	seconds: number;
}

/** One autocannon instance; every response time is kept so that any percentile can be read exactly. */
function measure(name: string, options: Options, okStatus: (s: number) => boolean = (s) => s >= 200 && s < 300) {
	const m: Measured = { name, clients: options.connections ?? 1, latencies: [], statuses: new Map(), errors: 0, timeouts: 0, seconds: 0 };
	const started = performance.now();
	const instance: Instance = autocannon({ timeout: 30, ...options, url: BASE + (options.url ?? '') }, () => {});
	instance.on('response', (_client, statusCode: number, _bytes: number, responseTime: number) => {
		m.latencies.push(responseTime);
		m.statuses.set(statusCode, (m.statuses.get(statusCode) ?? 0) + 1);
	});
	const done = new Promise<Measured>((resolve) => {
		instance.on('done', (result: Result) => {
			m.errors = result.errors;
			m.timeouts = result.timeouts;
			m.seconds = (performance.now() - started) / 1000;
			resolve(m);
		});
	});
	return { instance, done, okStatus };
}

function percentile(sorted: number[], p: number): number {
	if (!sorted.length) return NaN;
	const rank = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1));
	return sorted[rank];
}

interface Row {
	target: string;
	clients: number;
	requests: number;
	rps: number;
	p50: number;
	p95: number;
	p975: number;
	p99: number;
	max: number;
	errors: number;
	non2xx: number;
}

function rowOf(m: Measured, okStatus: (s: number) => boolean): Row {
	const sorted = Float64Array.from(m.latencies).sort() as unknown as number[];
	let bad = 0;
	for (const [status, n] of m.statuses) if (!okStatus(status)) bad += n;
	return {
		target: m.name,
		clients: m.clients,
		requests: m.latencies.length,
		rps: m.latencies.length / Math.max(m.seconds, 1e-9),
		p50: percentile(sorted, 50),
		p95: percentile(sorted, 95),
		p975: percentile(sorted, 97.5),
		p99: percentile(sorted, 99),
		max: sorted.length ? sorted[sorted.length - 1] : NaN,
		errors: m.errors + m.timeouts,
		non2xx: bad
	};
}

function printTable(rows: Row[]) {
	const ms = (x: number) => (Number.isFinite(x) ? (x < 10 ? x.toFixed(2) : x < 100 ? x.toFixed(1) : x.toFixed(0)) : '–');
	const head = ['target', 'clients', 'requests', 'req/s', 'p50 ms', 'p95 ms', 'p97.5 ms', 'p99 ms', 'max ms', 'errors', 'non-2xx'];
	const body = rows.map((r) => [r.target, String(r.clients), String(r.requests), r.rps.toFixed(1), ms(r.p50), ms(r.p95), ms(r.p975), ms(r.p99), ms(r.max), String(r.errors), String(r.non2xx)]);
	const width = head.map((h, i) => Math.max(h.length, ...body.map((b) => b[i].length)));
	const line = (cells: string[]) => '| ' + cells.map((c, i) => (i === 0 ? c.padEnd(width[i]) : c.padStart(width[i]))).join(' | ') + ' |';
	console.log(line(head));
	console.log('| ' + width.map((w, i) => (i === 0 ? '-'.repeat(w) : '-'.repeat(w - 1) + ':')).join(' | ') + ' |');
	for (const b of body) console.log(line(b));
	for (const r of rows)
		if (r.requests === 0) console.log(`(${r.target}: no request completed in time; the server was blocked throughout)`);
}

// ------------------------------------------------------------------ the run

const [modeller] = await db.select().from(schema.users).where(eq(schema.users.email, MODELLER.email));
if (!modeller) throw new Error('load: the demo lab is not seeded (scripts/load.sh seeds it)');
const { token } = await createApiToken(modeller.id, 'load test');
await closeDb();
const cookie = await signInCookie(MODELLER.email);

console.log(`[load] ${BASE}: ${CONNECTIONS} clients for ${SECONDS} s, ${availableParallelism()} cores, commit ${execSync('git rev-parse --short HEAD').toString().trim()}`);
// A stored audit with several hundred cycles, and a dense 30-state scheme (435 steps) whose audit is the heavy one.
const storedSchemeId = await createScheme(token, 'Kestrel load: ten-state lattice', randomScheme({ states: 10, steps: 25, seed: 2 }));
const heavySchemeId = await createScheme(token, 'Kestrel load: dense thirty-state scheme', randomScheme({ states: 30, steps: 435, seed: 1 }));
const stored = await audit(token, storedSchemeId);
if (!stored.id) throw new Error('load: the stored audit has no id');
const auditPage = `/labs/${LAB}/audits/${stored.id}/__data.json`;
const auditApi = `/api/v1/labs/${LAB}/audits/${stored.id}`;
const warm = await fetch(BASE + auditApi, { headers: { authorization: `Bearer ${token}` } });
const cycles = ((await warm.json()) as { audit: { results: { cycleCount: number } } }).audit.results.cycleCount;
console.log(`[load] stored audit: ${cycles} cycles; heavy audit: 30 states, 435 steps`);

const tokenHeaders = { authorization: `Bearer ${token}` };
/**
 * The health check probed at a steady 10 requests a second, each sent on time whether or not the last one has
 * answered (as people arrive), so a blocked event loop shows in the percentiles in proportion to how long it lasts.
 */
function healthProbe(name: string, seconds: number) {
	const m: Measured = { name, clients: 1, latencies: [], statuses: new Map(), errors: 0, timeouts: 0, seconds: 0 };
	const started = performance.now();
	const pending = new Set<Promise<void>>();
	let stopped = false;
	const timer = setInterval(() => {
		if (stopped) return;
		const t0 = performance.now();
		const p: Promise<void> = fetch(BASE + '/api/health', { signal: AbortSignal.timeout(30_000) })
			.then(async (res) => {
				await res.arrayBuffer();
				m.latencies.push(performance.now() - t0);
				m.statuses.set(res.status, (m.statuses.get(res.status) ?? 0) + 1);
			})
			.catch((err: Error) => {
				if (err.name === 'TimeoutError') m.timeouts++;
				else m.errors++;
			})
			.finally(() => pending.delete(p));
		pending.add(p);
	}, 100);
	const stop = () => {
		stopped = true;
		clearInterval(timer);
	};
	const limit = setTimeout(stop, seconds * 1000);
	const done = (async () => {
		await new Promise<void>((resolve) => {
			const check = setInterval(() => {
				if (stopped) {
					clearInterval(check);
					resolve();
				}
			}, 50);
		});
		clearTimeout(limit);
		await Promise.all(pending);
		m.seconds = (performance.now() - started) / 1000;
		return m;
	})();
	return { instance: { stop }, done, okStatus: (s: number) => s >= 200 && s < 300 };
}

// 1. idle health
const idleProbe = healthProbe('health (10/s), idle', IDLE_SECONDS);
const idle = rowOf(await idleProbe.done, idleProbe.okStatus);

// 2. health during one heavy audit alone
const duringHeavy = healthProbe('health (10/s), during a heavy audit', 900);
const heavyAlone = await audit(token, heavySchemeId, heavyConditions());
duringHeavy.instance.stop();
const heavyRow = rowOf(await duringHeavy.done, duringHeavy.okStatus);
console.log(`[load] heavy audit alone: ${(heavyAlone.ms / 1000).toFixed(1)} s${heavyAlone.job ? ' (as a job of the worker process)' : ' (in the request)'}`);

// 3. the load, with heavy audits running one after another the whole time
const share = (f: number) => Math.max(1, Math.round(CONNECTIONS * f));
const targets = [
	measure('stored audit, page data (cookie)', { url: auditPage, connections: share(0.3), duration: SECONDS, headers: { cookie } }),
	measure('stored audit, API (token)', { url: auditApi, connections: share(0.3), duration: SECONDS, headers: tokenHeaders }),
	measure('scheme list, API (token)', { url: `/api/v1/labs/${LAB}/schemes`, connections: share(0.2), duration: SECONDS, headers: tokenHeaders }),
	measure('preview, API (token)', {
		url: `/api/v1/labs/${LAB}/schemes/${storedSchemeId}/preview`,
		method: 'POST',
		connections: share(0.2),
		duration: SECONDS,
		headers: { ...tokenHeaders, 'content-type': 'application/json' },
		body: JSON.stringify({ conditions: { forcePN: 1 } })
	})
];
const loadedHealth = healthProbe('health (10/s), under the load', SECONDS);
let loading = true;
const heavyTimes: number[] = [];
const heavyLoop = (async () => {
	while (loading) heavyTimes.push((await audit(token, heavySchemeId, heavyConditions())).ms);
})();
const measured = await Promise.all(targets.map(async (t) => rowOf(await t.done, t.okStatus)));
const healthLoaded = rowOf(await loadedHealth.done, loadedHealth.okStatus);
loading = false;
await heavyLoop;

console.log();
printTable([idle, heavyRow, ...measured, healthLoaded]);
console.log(`\nheavy audits during the load: ${heavyTimes.length}, ${heavyTimes.map((t) => (t / 1000).toFixed(1) + ' s').join(', ')}`);

const storedP975 = Math.max(measured[0].p975, measured[1].p975);
const errors = [idle, heavyRow, ...measured, healthLoaded].reduce((s, r) => s + r.errors, 0);
const non2xx = [idle, heavyRow, ...measured, healthLoaded].reduce((s, r) => s + r.non2xx, 0);
const aims = [
	{ aim: 'stored audit p97.5 / health p97.5, both under the load', value: storedP975 / healthLoaded.p975, limit: 3 },
	{ aim: 'health p97.5 during a heavy audit / idle', value: heavyRow.p975 / idle.p975, limit: 5 },
	{ aim: 'errors and timeouts', value: errors, limit: 0 },
	{ aim: 'non-2xx answers', value: non2xx, limit: 0 }
];
console.log('\n| aim | measured | within |\n| --- | ---: | ---: |');
for (const a of aims) console.log(`| ${a.aim} | ${Number.isInteger(a.value) ? a.value : a.value.toFixed(2)} | ${a.value <= a.limit ? `yes (≤ ${a.limit})` : `NO (> ${a.limit})`} |`);
process.exit(0);
