import { readdirSync, statSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import { describe, expect, it } from 'vitest';
import { mayAccess, routeAccess } from '../../src/lib/access';

// REQUIREMENTS AC1: permissions are enforced on the server per function. Every route in
// src/routes must have a rule in $lib/access (the guard's table); a new route without one fails here.
const routesDir = new URL('../../src/routes', import.meta.url).pathname;

function routeIds(dir = routesDir): { id: string; files: string[] }[] {
	const files = readdirSync(dir).filter((f) => f.startsWith('+'));
	const rel = relative(routesDir, dir).split(sep).filter(Boolean);
	const here = files.length ? [{ id: '/' + rel.join('/'), files }] : [];
	const below = readdirSync(dir)
		.filter((f) => statSync(join(dir, f)).isDirectory())
		.flatMap((f) => routeIds(join(dir, f)));
	return [...here, ...below];
}

const endpoints = routeIds().filter((r) =>
	r.files.some((f) => /^\+(page(\.server)?\.(svelte|ts)|server\.ts)$/.test(f))
);

describe('route rules', () => {
	it('finds the routes (the scan itself works)', () => {
		expect(endpoints.map((r) => r.id)).toEqual(
			expect.arrayContaining(['/login', '/(app)/people/[id=uuid]', '/api/v1/health'])
		);
	});

	it.each(endpoints.map((r) => r.id))('%s has an access rule', (id) => {
		expect(routeAccess).toHaveProperty([id]);
	});

	it('has no rule for a route that does not exist', () => {
		// Folders without files of their own (e.g. /api, /(app)/procedures/versions) are route ids too.
		const folders = (dir: string): string[] =>
			readdirSync(dir)
				.filter((f) => statSync(join(dir, f)).isDirectory())
				.flatMap((f) => [
					'/' + relative(routesDir, join(dir, f)).split(sep).join('/'),
					...folders(join(dir, f))
				]);
		const dirs = new Set(['/', ...folders(routesDir)]);
		for (const id of Object.keys(routeAccess)) expect(dirs.has(id), id).toBe(true);
	});

	it('keeps People and access to administrators and the plant register away from them', () => {
		expect(mayAccess(routeAccess['/(app)/people'], ['administrator'], true)).toBe(true);
		for (const role of ['technician', 'planner', 'quality', 'inspector'] as const) {
			expect(mayAccess(routeAccess['/(app)/people'], [role], true)).toBe(false);
			expect(mayAccess(routeAccess['/(app)/plant'], [role], true)).toBe(true);
		}
		expect(mayAccess(routeAccess['/(app)/plant'], ['administrator'], true)).toBe(false);
		expect(mayAccess(routeAccess['/(app)'], [], false)).toBe(false);
		expect(mayAccess(routeAccess['/login'], [], false)).toBe(true);
	});
});
