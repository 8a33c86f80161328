import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	compilerOptions: { runes: true },
	kit: {
		adapter: adapter({ out: 'build' }),
		// Cross-site form POSTs are refused by our own handle (src/lib/server/auth/origin.ts), which
		// makes the one exception SvelteKit's check cannot: API calls with a Bearer token. So
		// SvelteKit's own check is off: `trustedOrigins: ['*']` is how SvelteKit 2.36+ spells that
		// (`checkOrigin: false` is deprecated).
		csrf: { trustedOrigins: ['*'] },
		// A Content-Security-Policy without unsafe-inline scripts: SvelteKit hashes its own
		// inline bootstrap script.
		csp: {
			mode: 'hash',
			directives: {
				'default-src': ['self'],
				'script-src': ['self'],
				'style-src': ['self', 'unsafe-inline'],
				'img-src': ['self', 'data:', 'blob:'],
				'font-src': ['self'],
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
