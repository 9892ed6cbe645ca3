/**
 * Calls pages, form actions and non-API `+server.ts` routes in-process, the way SvelteKit's server does after
 * hooks.server.ts: the whole `handle` sequence (origin check, Auth.js, identify, headers) runs unchanged, then the
 * layout loads from the root down and the page load, or the named form action. Routes are found from the files
 * under src/routes, so a route added there is reachable without a list to keep up to date.
 *
 * Answers are Responses: a load or action that succeeds is 200 with its data as JSON, fail() keeps its status,
 * error() and redirect() theirs (redirects with a Location header), anything unexpected is a 500 — as the server.
 */
import { isActionFailure, isHttpError, isRedirect, type RequestEvent } from '@sveltejs/kit';
// @ts-ignore: this entry point of @sveltejs/kit ships no types of its own
import { with_request_store } from '@sveltejs/kit/internal/server';
import { handle } from '../../src/hooks.server';
import { TEST_PASSWORD } from './db';

export const ORIGIN = 'http://127.0.0.1:5180';

type Load = (event: any) => unknown;
interface ServerModule {
	load?: Load;
	actions?: Record<string, (event: any) => unknown>;
	GET?: (event: any) => Promise<Response>;
	POST?: (event: any) => Promise<Response>;
}

const serverFiles = import.meta.glob<ServerModule>(['../../src/routes/**/+page.server.ts', '../../src/routes/**/+layout.server.ts', '../../src/routes/**/+server.ts']);
// Only the names: pages without a server load are still routes (their layouts guard them).
const pageFiles = Object.keys(import.meta.glob('../../src/routes/**/+page.svelte'));

const idOf = (file: string) => file.replace('../../src/routes', '').replace(/\/\+[\w.]+$/, '') || '/';

interface Route {
	id: string;
	kind: 'page' | 'endpoint';
	pattern: RegExp;
	names: string[];
}

function compile(id: string, kind: Route['kind']): Route {
	const names: string[] = [];
	const visible = id.replace(/\/\([^)]+\)/g, '') || '/';
	const source = visible.replace(/[.*+?^${}()|\\]/g, '\\$&').replace(/\\?\[(\w+)\\?\]/g, (_m, name: string) => {
		names.push(name);
		return '([^/]+)';
	});
	return { id, kind, pattern: new RegExp(`^${source}$`), names };
}

const pageIds = new Set([...pageFiles.map(idOf), ...Object.keys(serverFiles).filter((f) => f.endsWith('+page.server.ts')).map(idOf)]);
const endpointIds = new Set(Object.keys(serverFiles).filter((f) => f.endsWith('/+server.ts')).map(idOf));
const routes: Route[] = [...[...pageIds].map((id) => compile(id, 'page' as const)), ...[...endpointIds].map((id) => compile(id, 'endpoint' as const))];
routes.sort((a, b) => a.names.length - b.names.length);

/** Every page route and every `+server.ts` route id outside /api, sorted. */
export function pageRouteIds(): { pages: string[]; endpoints: string[] } {
	return { pages: [...pageIds].sort(), endpoints: [...endpointIds].filter((id) => !id.startsWith('/api')).sort() };
}

/** The action names of a page route ('default' for an unnamed one); [] when it has no actions. */
export async function actionNames(id: string): Promise<string[]> {
	const load = serverFiles[`../../src/routes${id === '/' ? '' : id}/+page.server.ts`];
	return load ? Object.keys((await load()).actions ?? {}).sort() : [];
}

function match(pathname: string): { route: Route; params: Record<string, string> } {
	for (const route of routes) {
		const m = route.pattern.exec(pathname);
		if (m) return { route, params: Object.fromEntries(route.names.map((n, i) => [n, decodeURIComponent(m[i + 1])])) };
	}
	throw new Error(`pages: no route matches ${pathname}`);
}

/** The cookies of one browser: what the server set is sent back on the next request. */
export class CookieJar {
	values = new Map<string, string>();
	header(): string {
		return [...this.values].map(([k, v]) => `${k}=${v}`).join('; ');
	}
}

function cookiesFor(request: Request, jar: CookieJar | undefined): RequestEvent['cookies'] {
	const sent = new Map<string, string>();
	for (const part of (request.headers.get('cookie') ?? '').split(';')) {
		const at = part.indexOf('=');
		if (at > 0) sent.set(part.slice(0, at).trim(), part.slice(at + 1).trim());
	}
	return {
		get: (name: string) => sent.get(name),
		getAll: () => [...sent].map(([name, value]) => ({ name, value })),
		set: (name: string, value: string, opts?: { maxAge?: number; expires?: Date }) => {
			const gone = !value || opts?.maxAge === 0 || (opts?.expires && opts.expires.getTime() <= Date.now());
			if (gone) jar?.values.delete(name);
			else jar?.values.set(name, value);
		},
		delete: (name: string) => void jar?.values.delete(name),
		serialize: () => ''
	} as unknown as RequestEvent['cookies'];
}

const NO_SPAN = {};

export interface PageCall {
	/** A browser's cookies (sent, and updated from what the server sets). */
	jar?: CookieJar;
	token?: string | null;
	form?: FormData | Record<string, string>;
	/** The Origin header of a POST; this site's own unless given (null sends none). */
	origin?: string | null;
	headers?: Record<string, string>;
	body?: { bytes: BodyInit; type: string };
}

function asForm(form: PageCall['form']): FormData | undefined {
	if (!form || form instanceof FormData) return form;
	const data = new FormData();
	for (const [k, v] of Object.entries(form)) data.set(k, v);
	return data;
}

const json = (status: number, payload: unknown, headers: Record<string, string> = {}) =>
	new Response(JSON.stringify(payload ?? null), { status, headers: { 'content-type': 'application/json', ...headers } });

function answer(err: unknown, headers: Record<string, string>): Response {
	if (isRedirect(err)) return new Response(null, { status: err.status, headers: { ...headers, location: err.location } });
	if (isHttpError(err)) return json(err.status, err.body, headers);
	const status = (err as { status?: number })?.status;
	if (typeof status === 'number' && status >= 400 && status < 500) return json(status, { message: (err as Error).message }, headers);
	console.error('[pages] unexpected error:', err);
	return json(500, { message: String((err as Error)?.stack ?? err) }, headers);
}

/**
 * One request through hooks.server.ts's handle to a page (GET: layouts + load; POST: the action named by `?/name`)
 * or a non-API `+server.ts` route.
 */
export async function page(method: 'GET' | 'POST', path: string, call: PageCall = {}): Promise<Response> {
	const url = new URL(path, ORIGIN);
	const headers = new Headers(call.headers);
	if (call.jar?.values.size) headers.set('cookie', call.jar.header());
	if (call.token) headers.set('authorization', `Bearer ${call.token}`);
	let body: BodyInit | undefined;
	if (method === 'POST') {
		if (call.origin !== null) headers.set('origin', call.origin ?? ORIGIN);
		if (call.body) {
			body = call.body.bytes;
			headers.set('content-type', call.body.type);
		} else body = asForm(call.form) ?? new FormData();
	}
	const request = new Request(url, { method, headers, body });
	const { route, params } = match(url.pathname);
	const responseHeaders: Record<string, string> = {};
	const event = {
		request,
		url,
		params,
		route: { id: route.id },
		locals: {} as App.Locals,
		cookies: cookiesFor(request, call.jar),
		fetch: globalThis.fetch,
		getClientAddress: () => '127.0.0.1',
		platform: undefined,
		setHeaders: (h: Record<string, string>) => Object.assign(responseHeaders, h),
		isDataRequest: false,
		isSubRequest: false,
		isRemoteRequest: false,
		tracing: { enabled: false, root: NO_SPAN, current: NO_SPAN }
	} as unknown as RequestEvent;
	const state = { tracing: { record_span: ({ fn }: { fn: (span: unknown) => unknown }) => fn(NO_SPAN) } };
	const resolve = async (resolved: RequestEvent): Promise<Response> => {
		try {
			if (route.kind === 'endpoint') {
				const mod = await serverFiles[`../../src/routes${route.id}/+server.ts`]();
				const handler = mod[method];
				return handler ? await handler(resolved) : new Response('method not allowed', { status: 405 });
			}
			if (method === 'POST') {
				const mod = await serverFiles[`../../src/routes${route.id === '/' ? '' : route.id}/+page.server.ts`]?.();
				const name = [...url.searchParams.keys()].find((k) => k.startsWith('/'))?.slice(1) || 'default';
				const action = mod?.actions?.[name];
				if (!action) return json(405, { message: `no action "${name}" on ${route.id}` });
				const result = await action(resolved);
				if (isActionFailure(result)) return json(result.status, { type: 'failure', data: result.data }, responseHeaders);
				return json(200, { type: 'success', data: result ?? null }, responseHeaders);
			}
			// Layouts from the root down, then the page; each sees its parents' data.
			const segments = route.id === '/' ? [''] : route.id.split('/');
			let data: Record<string, unknown> = {};
			for (let i = 1; i <= segments.length; i++) {
				const dir = segments.slice(0, i).join('/');
				const layout = serverFiles[`../../src/routes${dir}/+layout.server.ts`];
				if (layout) data = { ...data, ...((await (await layout()).load?.({ ...resolved, parent: async () => data, depends: () => {}, untrack: (f: () => unknown) => f() })) as object) };
			}
			const own = serverFiles[`../../src/routes${route.id === '/' ? '' : route.id}/+page.server.ts`];
			if (own) data = { ...data, ...((await (await own()).load?.({ ...resolved, parent: async () => data, depends: () => {}, untrack: (f: () => unknown) => f() })) as object) };
			return new Response(JSON.stringify(data), { status: 200, headers: { ...responseHeaders, 'content-type': 'text/html; charset=utf-8' } });
		} catch (err) {
			return answer(err, responseHeaders);
		}
	};
	return with_request_store({ event, state } as never, () => handle({ event, resolve }));
}

/** Signs a person in with their password through the real sign-in form action; the jar then holds the session. */
export async function signInAs(email: string, password = TEST_PASSWORD, jar = new CookieJar()): Promise<{ jar: CookieJar; response: Response }> {
	const response = await page('POST', '/signin', { jar, form: { providerId: 'password', email, password, redirectTo: '/labs' } });
	return { jar, response };
}
