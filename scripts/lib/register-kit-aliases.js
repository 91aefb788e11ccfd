// Registers kit-aliases.js once per process (Node ≥ 20.6: module.register).
import { register } from 'node:module';

let done = false;
export function registerKitAliases() {
	if (done) return;
	register('./kit-aliases.js', import.meta.url);
	done = true;
}
