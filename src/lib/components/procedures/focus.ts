import { tick } from 'svelte';

/**
 * Moves keyboard focus after the editor changes its own structure (a step added, moved or
 * removed), so that a keyboard user stays where the work is. `ids` are tried in order; a
 * disabled or missing element is skipped.
 */
export async function focusFirst(...ids: string[]) {
	await tick();
	for (const id of ids) {
		const el = document.getElementById(id) as HTMLElement & { disabled?: boolean };
		if (el && !el.disabled) {
			el.focus();
			return;
		}
	}
}
