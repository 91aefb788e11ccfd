import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	compilerOptions: {
		// Svelte 5 runes in all of our own components; libraries compile as they were written.
		runes: ({ filename }) => (filename.split(/[/\\]/).includes('node_modules') ? undefined : true)
	},
	kit: {
		// npm test builds into build-test/ (COUNTERSIGN_BUILD_DIR), so that it never replaces the files
		// of an app that `npm start` is serving from build/.
		adapter: adapter({ out: process.env.COUNTERSIGN_BUILD_DIR ?? 'build' }),
		// Content-Security-Policy (10/10; REQUIREMENTS SE2): scripts only from the app itself and the
		// inline start-up script SvelteKit writes with a per-response nonce — no 'unsafe-inline' and
		// no 'unsafe-eval' for scripts. Inline styles stay allowed (Svelte sets style attributes, e.g.
		// a progress bar's width); they cannot run code. No framing, no plugins, forms only to us.
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
		},
		typescript: {
			// The setup scripts and benchmarks are plain JS with JSDoc types: type-check them too, so
			// that a missing import fails `npm run check` instead of a benchmark run.
			config: (tsconfig) => ({
				...tsconfig,
				include: [
					...tsconfig.include,
					'../scripts/**/*.js',
					'../scripts/**/*.mjs',
					'../bench/**/*.js'
				]
			})
		}
	}
};

export default config;
