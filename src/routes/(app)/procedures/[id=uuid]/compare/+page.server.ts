import { error } from '@sveltejs/kit';
import { compareContents } from '$lib/procedure-compare';
import * as procedures from '$lib/server/procedures';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params, url }) => {
	const found = await procedures.getProcedure(params.id);
	if (!found) error(404, 'No such procedure.');
	const pick = (name: string, fallback: number) => {
		const n = Number(url.searchParams.get(name) ?? fallback);
		return found.versions.find((v) => v.version === n);
	};
	const newest = found.versions[0]!;
	const a = pick('a', found.versions[1]?.version ?? newest.version);
	const b = pick('b', newest.version);
	if (!a || !b) error(404, 'No such version of this procedure.');
	return {
		procedure: { id: found.id, code: found.code },
		versions: found.versions.map((v) => v.version),
		a: { version: a.version, status: a.status, revision: a.revision },
		b: { version: b.version, status: b.status, revision: b.revision },
		changes: compareContents(a.content, b.content)
	};
};
