import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		// npm test builds into its own temp dirs so several test runs can share a checkout.
		adapter: adapter({ out: process.env.GLASSCRIB_BUILD_DIR ?? 'build', precompress: false }),
		outDir: process.env.GLASSCRIB_KIT_DIR ?? '.svelte-kit',
		// The form origin check is enforced by originCheck in hooks.server.ts (the same rule, with a
		// message the page can show instead of SvelteKit's bare 403): see src/lib/server/origin-check.ts.
		csrf: { trustedOrigins: ['*'] },
		csp: {
			mode: 'auto',
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
