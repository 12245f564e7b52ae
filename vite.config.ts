import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

/** Font files, which must be served as files (see build.assetsInlineLimit). */
const FONT_FILE = /\.(woff2?|ttf|otf|eot)(\?.*)?$/i;

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	server: { host: '127.0.0.1', port: 5173 },
	preview: { host: '127.0.0.1', port: 4173 },
	build: {
		// Never inline fonts as data: URLs: the CSP allows fonts only from 'self' (font-src), so an inlined
		// font is refused by the browser and logged as an error. Other small assets keep Vite's default.
		assetsInlineLimit: (filePath: string) => (FONT_FILE.test(filePath) ? false : undefined),
		// Plugin timing reports are noise in our logs.
		rolldownOptions: { checks: { pluginTimings: false } }
	},
	test: {
		projects: [
			{
				extends: true,
				test: {
					name: 'unit',
					include: ['tests/unit/**/*.test.ts', 'src/**/*.test.ts'],
					environment: 'node'
				}
			},
			{
				extends: true,
				test: {
					name: 'integration',
					include: ['tests/integration/**/*.test.ts'],
					environment: 'node',
					testTimeout: 60_000,
					hookTimeout: 120_000,
					fileParallelism: false
				}
			},
			{
				extends: true,
				test: {
					name: 'e2e',
					include: ['tests/e2e/**/*.test.ts'],
					environment: 'node',
					testTimeout: 90_000,
					hookTimeout: 180_000,
					fileParallelism: false
				}
			}
		]
	}
});
