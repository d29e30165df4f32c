import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		adapter: adapter({ out: 'build' }),
		// The Content-Security-Policy of every page. 'auto' puts a nonce on SvelteKit's own
		// inline scripts (a hash on prerendered pages); no other inline script runs. Styles
		// allow 'unsafe-inline': Svelte's style: directives, the calendar and uPlot set inline
		// styles, and a style cannot run code. The development mail viewer's sandboxed srcdoc
		// frame inherits this policy, so a mail's remote images and scripts stay blocked.
		// The other headers (nosniff, Referrer-Policy, …) are src/lib/server/http-guards.ts.
		csp: {
			mode: 'auto',
			directives: {
				'default-src': ['self'],
				'script-src': ['self'],
				'style-src': ['self', 'unsafe-inline'],
				'img-src': ['self', 'data:', 'blob:'],
				'font-src': ['self'],
				'connect-src': ['self'],
				'frame-src': ['self'],
				'frame-ancestors': ['none'],
				'form-action': ['self'],
				'base-uri': ['self'],
				'object-src': ['none']
			}
		},
		// SvelteKit's own origin check is off: it answers a cross-site form post with plain
		// text before any hook runs. src/lib/server/csrf.ts makes the same check (and more) in
		// a handle before anything reads the request, answering in the API's error shape.
		// ORIGIN (adapter-node) says what this site's origin is.
		csrf: { trustedOrigins: ['*'] }
	}
};

export default config;
