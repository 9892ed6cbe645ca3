/**
 * Calls the JSON API in-process, the way the server does: through hooks.server.ts's `handle` (Auth.js, then the
 * `identify` handle that reads `Authorization: Bearer esc_…`), then the `+server.ts` module whose route matches
 * the path. Routes are found from the files themselves, so a route added under src/routes/api is reachable here
 * without a list to keep up to date; a path that matches no route throws (a test can never pass by accident).
 */
import type { RequestEvent } from '@sveltejs/kit';
// SvelteKit's sequence() reads the per-request store that its server sets up around `handle`; we set up the same
// store (without tracing) so the real hooks run unchanged.
// @ts-ignore: this entry point of @sveltejs/kit ships no types of its own
import { with_request_store } from '@sveltejs/kit/internal/server';
import { handle } from '../../src/hooks.server';
import { createApiToken } from '../../src/lib/server/api-tokens';

type Handler = (event: RequestEvent) => Promise<Response>;
type RouteModule = Partial<Record<'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE', Handler>>;

const files = import.meta.glob<RouteModule>('../../src/routes/api/**/+server.ts');

interface Route {
	id: string;
	pattern: RegExp;
	names: string[];
	load: () => Promise<RouteModule>;
}

const routes: Route[] = Object.entries(files).map(([file, load]) => {
	const id = file.replace('../../src/routes', '').replace(/\/\+server\.ts$/, '') || '/';
	const names: string[] = [];
	const source = id.replace(/[.*+?^${}()|\\]/g, '\\$&').replace(/\\?\[(\w+)\\?\]/g, (_m, name: string) => {
		names.push(name);
		return '([^/]+)';
	});
	return { id, pattern: new RegExp(`^${source}$`), names, load };
});
// Static segments win over parameters, as in SvelteKit.
routes.sort((a, b) => a.names.length - b.names.length);

export function routeIds(): string[] {
	return routes.map((r) => r.id).sort();
}

function match(pathname: string): { route: Route; params: Record<string, string> } {
	for (const route of routes) {
		const m = route.pattern.exec(pathname);
		if (m) return { route, params: Object.fromEntries(route.names.map((n, i) => [n, decodeURIComponent(m[i + 1])])) };
	}
	throw new Error(`request: no +server.ts route matches ${pathname}`);
}

function noCookies(): RequestEvent['cookies'] {
	return {
		get: () => undefined,
		getAll: () => [],
		set: () => {},
		delete: () => {},
		serialize: () => ''
	};
}

const NO_SPAN = {};

export interface CallOptions {
	/** A personal API token; without one the request is anonymous. */
	token?: string | null;
	json?: unknown;
	form?: FormData;
	/** A raw body (e.g. malformed JSON) with its content type. */
	raw?: { body: string; type: string };
	/** More request headers (e.g. If-None-Match). */
	headers?: Record<string, string>;
}

/** One request through hooks.server.ts's handle to the matching +server.ts handler. */
export async function api(method: 'GET' | 'POST', path: string, options: CallOptions = {}): Promise<Response> {
	const url = new URL(path, 'http://127.0.0.1:5180');
	const headers = new Headers(options.headers);
	if (options.token) headers.set('authorization', `Bearer ${options.token}`);
	let body: BodyInit | undefined;
	if (options.json !== undefined) {
		headers.set('content-type', 'application/json');
		body = JSON.stringify(options.json);
	} else if (options.form) body = options.form;
	else if (options.raw) {
		headers.set('content-type', options.raw.type);
		body = options.raw.body;
	}
	const request = new Request(url, { method, headers, body });
	const { route, params } = match(url.pathname);
	const module = await route.load();
	const handler = module[method];
	const event = {
		request,
		url,
		params,
		route: { id: route.id },
		locals: {} as App.Locals,
		cookies: noCookies(),
		fetch: globalThis.fetch,
		getClientAddress: () => '127.0.0.1',
		platform: undefined,
		setHeaders: () => {},
		isDataRequest: false,
		isSubRequest: false,
		tracing: { enabled: false, root: NO_SPAN, current: NO_SPAN }
	} as unknown as RequestEvent;
	const state = { tracing: { record_span: ({ fn }: { fn: (span: unknown) => unknown }) => fn(NO_SPAN) } };
	return with_request_store({ event, state } as never, () =>
		handle({
			event,
			resolve: async (resolved) => (handler ? handler(resolved) : new Response('method not allowed', { status: 405 }))
		})
	);
}

/** A fresh personal API token for a person. */
export async function tokenFor(userId: string, name = 'integration test'): Promise<string> {
	return (await createApiToken(userId, name)).token;
}

/** The JSON body of a response (throws with the text when it is not JSON). */
export async function body<T = Record<string, unknown>>(response: Response): Promise<T> {
	const text = await response.text();
	try {
		return JSON.parse(text) as T;
	} catch {
		throw new Error(`request: expected JSON, got ${response.status} ${text.slice(0, 200)}`);
	}
}
