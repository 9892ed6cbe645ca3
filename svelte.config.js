import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		adapter: adapter({ out: 'build' }),
		version: { name: process.env.npm_package_version ?? '0.1.0' },
		// SvelteKit's own check would refuse a multipart upload that carries only an API token; hooks.server.ts
		// (sameOrigin) checks the Origin of every cookie or form request instead.
		csrf: { trustedOrigins: ['*'] },
		// Scripts only from this server (SvelteKit adds a nonce or hash to its own inline start script). Styles allow
		// inline attributes: Svelte's style: bindings and the d3 diagram set them; scripts never run from them.
		csp: {
			mode: 'auto',
			directives: {
				'default-src': ['self'],
				'script-src': ['self'],
				'style-src': ['self', 'unsafe-inline'],
				'img-src': ['self', 'data:', 'blob:'],
				'font-src': ['self', 'data:'],
				'connect-src': ['self'],
				'object-src': ['none'],
				'base-uri': ['self'],
				'form-action': ['self'],
				'frame-ancestors': ['none']
			}
		}
	}
};

export default config;
