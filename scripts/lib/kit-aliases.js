// Module hooks that let scripts (the demo seed, benchmarks) import the app's server modules
// outside Vite: `$lib/…` resolves to src/lib/…, and `$env/dynamic/private` to process.env, as
// SvelteKit does for the built server. Registered by register-kit-aliases.js; tsx then compiles
// the TypeScript.
import { existsSync } from 'node:fs';
import { fileURLToPath, pathToFileURL } from 'node:url';

const lib = fileURLToPath(new URL('../../src/lib/', import.meta.url));
const env = new URL('./kit-env.js', import.meta.url).href;

/** @type {import('node:module').ResolveHook} */
export async function resolve(specifier, context, nextResolve) {
	if (specifier === '$env/dynamic/private') return { url: env, shortCircuit: true };
	if (specifier === '$lib' || specifier.startsWith('$lib/')) {
		const rest = specifier.slice('$lib/'.length);
		for (const candidate of [
			rest,
			`${rest}.ts`,
			`${rest}.js`,
			`${rest}/index.ts`,
			`${rest}/index.js`
		]) {
			const path = lib + candidate;
			if (candidate && existsSync(path) && !path.endsWith('/'))
				return nextResolve(pathToFileURL(path).href, context);
		}
	}
	return nextResolve(specifier, context);
}
