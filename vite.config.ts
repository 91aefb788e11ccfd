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
					hookTimeout: 120_000,
					// Tests sign in and sign far faster than people: the rate limits (rate-limit.ts) are
					// out of their way, except in tests/integration/rate-limits.spec.ts, which sets its own.
					env: {
						RATE_LIMIT_API_PER_PERSON: '1000000',
						RATE_LIMIT_API_PER_TOKEN: '1000000',
						RATE_LIMIT_API_PER_ADDRESS: '1000000',
						RATE_LIMIT_SIGN_IN_PER_ADDRESS: '1000000',
						RATE_LIMIT_SIGNATURES_PER_PERSON: '1000000'
					}
				}
			}
		]
	}
});
