import tailwindcss from '@tailwindcss/vite';
import { sveltekit } from '@sveltejs/kit/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	server: { host: '127.0.0.1', port: 5173, strictPort: true },
	// The bundler's plugin-timing report is noise in every npm start and npm test.
	build: { rolldownOptions: { checks: { pluginTimings: false } } },
	test: {
		projects: [
			{
				extends: './vite.config.ts',
				test: {
					name: 'unit',
					include: ['src/**/*.spec.ts', 'tests/unit/**/*.spec.ts'],
					environment: 'node'
				}
			},
			{
				extends: './vite.config.ts',
				test: {
					name: 'integration',
					include: ['tests/integration/**/*.spec.ts'],
					environment: 'node',
					testTimeout: 60_000,
					hookTimeout: 120_000
				}
			}
		]
	}
});
