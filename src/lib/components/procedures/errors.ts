/** Superforms' nested errors, read loosely: each level may hold `_errors` and keyed children. */
export type Errs = { _errors?: string[] } & { [key: string]: Errs | string[] | undefined };

export const at = (
	e: Errs | string[] | undefined,
	...path: (string | number)[]
): Errs | undefined => {
	let cur: unknown = e;
	for (const p of path) cur = (cur as Record<string, unknown> | undefined)?.[String(p)];
	return cur as Errs | undefined;
};

/** The messages of one field: superforms gives a leaf as a string array. */
export const msgs = (e: Errs | undefined, key: string): string[] | undefined => {
	const v = e?.[key];
	if (Array.isArray(v)) return v;
	return (v as Errs | undefined)?._errors;
};

/** How many messages a subtree holds (to say "3 problems in this step"). */
export function count(e: unknown): number {
	if (!e) return 0;
	if (Array.isArray(e)) return e.length;
	return Object.values(e as Record<string, unknown>).reduce<number>((n, v) => n + count(v), 0);
}
