// npm run bench [-- NAME …]: runs the benchmarks in bench/ (all of them, or those named) one after
// another. Each prints its own figures; none of them is a test.
import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const dir = fileURLToPath(new URL('.', import.meta.url));
const all = readdirSync(dir)
	.filter((f) => f.endsWith('.js') && f !== 'run.js')
	.map((f) => f.slice(0, -3));
const wanted = process.argv.slice(2).length ? process.argv.slice(2) : all;
for (const name of wanted) {
	if (!all.includes(name)) {
		console.error(`no benchmark "${name}" (have: ${all.join(', ')})`);
		process.exit(2);
	}
	console.log(`\n== bench/${name}`);
	const result = spawnSync(process.execPath, [`${dir}${name}.js`], { stdio: 'inherit' });
	if (result.status !== 0) process.exit(result.status ?? 1);
}
