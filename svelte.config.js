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
