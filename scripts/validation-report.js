// npm run validation-report (10/10 item 7): the requirements traceability a plant's computerised
// system validation file holds — each requirement of docs/requirements.md, the tests that cite it
// (scripts/lib/traceability.js says the rule; the report repeats it), their result in the last run
// (test-results/unit.json, integration.json, e2e-results.json as scripts/test.js writes them; a
// part without its report is "not run"), the requirements no test covers and the tests that
// failed. Writes validation/traceability.html and validation/traceability.pdf (git-ignored) and
// prints their paths and "N requirements, M covered, K not covered, F failing". Runs no test and
// needs no database. Exit 1 only when the requirements list is broken or cannot be read.
//
//   node scripts/validation-report.js [--results DIR] [--out DIR] [--requirements FILE]
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureDependencies } from './ensure-deps.js';

const root = fileURLToPath(new URL('..', import.meta.url));
// Installs the dependencies only when what the report needs is missing (a fresh clone): a report
// that only reads should not start an `npm ci` beside someone else's test run.
if (
	['typescript', 'pdf-lib', '@pdf-lib/fontkit', '@fontsource/noto-sans'].some(
		(p) => !existsSync(join(root, 'node_modules', p))
	)
)
	ensureDependencies({ quiet: true });
const t = await import('./lib/traceability.js');
const { renderHtml, renderPdf } = await import('./lib/traceability-render.js');

/** @param {string} name @param {string} fallback */
const option = (name, fallback) => {
	const at = process.argv.indexOf(name);
	return resolve(
		root,
		at > 0 && process.argv[at + 1] ? /** @type {string} */ (process.argv[at + 1]) : fallback
	);
};
const resultsDir = option('--results', 'test-results');
const outDir = option('--out', 'validation');
const requirementsPath = option('--requirements', 'docs/requirements.md');
/** A path as printed: relative inside the repository, absolute outside it. */
const shown = (/** @type {string} */ p) => {
	const r = relative(root, p);
	return r.startsWith('..') ? p : r || '.';
};

/** @param {string} message */
function fail(message) {
	console.error(`validation-report: ${message}`);
	process.exit(1);
}

if (!existsSync(requirementsPath)) fail(`no requirements list at ${shown(requirementsPath)}`);
const list = t.parseRequirements(readFileSync(requirementsPath, 'utf8'));
if (list.problems.length)
	fail(
		`${shown(requirementsPath)} is not in the expected layout:\n  ${list.problems.join('\n  ')}`
	);
if (!list.requirements.length) fail(`${shown(requirementsPath)} lists no requirement`);
const known = new Set(list.requirements.map((r) => r.id));

// The shared requirements (outside the repository, beside it): every one of their IDs must be here.
const sharedPath = resolve(root, '../shared/REQUIREMENTS.md');
const sharedMissing = existsSync(sharedPath)
	? t.sharedRequirementIds(readFileSync(sharedPath, 'utf8')).filter((id) => !known.has(id))
	: null;

/** @type {import('./lib/traceability.js').TestCase[]} */
const tests = [];
/** @type {import('./lib/traceability.js').UnknownCitation[]} */
const unknown = [];
const files = ['tests', 'src']
	.filter((d) => existsSync(join(root, d)))
	.flatMap((d) =>
		readdirSync(join(root, d), { recursive: true, encoding: 'utf8' }).map((f) =>
			`${d}/${f}`.replace(/\\/g, '/')
		)
	)
	.filter((f) => !f.includes('node_modules/') && t.isTestFile(f))
	.sort();
for (const file of files) {
	const found = t.findTests(file, readFileSync(join(root, file), 'utf8'), known);
	tests.push(...found.tests);
	unknown.push(...found.unknown);
}

/** @param {string} name */
const readJson = (name) => {
	const p = join(resultsDir, name);
	if (!existsSync(p)) return null;
	try {
		return JSON.parse(readFileSync(p, 'utf8'));
	} catch {
		return null;
	}
};
const report = (/** @type {string} */ name) => shown(join(resultsDir, name));
const runs = [
	t.readVitest('unit', report('unit.json'), readJson('unit.json'), root),
	t.readVitest('integration', report('integration.json'), readJson('integration.json'), root),
	t.readPlaywright(report('e2e-results.json'), readJson('e2e-results.json'), root)
];
const byPart = new Map(runs.map((r) => [r.part, r]));

// Test files changed after the run that their results come from.
const stale = runs
	.filter((r) => r.present && r.startedAt)
	.map((r) => ({
		part: r.part,
		files: [...new Set(tests.filter((x) => x.part === r.part).map((x) => x.file))].filter(
			(f) => statSync(join(root, f)).mtimeMs > /** @type {Date} */ (r.startedAt).getTime()
		)
	}))
	.filter((s) => s.files.length);

/** @param {string[]} args */
const git = (args) => {
	const r = spawnSync('git', args, { cwd: root, encoding: 'utf8' });
	return r.status === 0 ? r.stdout.trim() : null;
};
const commit = git(['rev-parse', 'HEAD']);
const status = commit ? git(['status', '--porcelain', '--untracked-files=no']) : null;

const { rows, traced } = t.trace(list.requirements, tests, byPart);
const summary = t.summarise(rows);
const data = {
	generatedAt: new Date(),
	commit,
	changedFiles: status === null ? null : status.split('\n').filter(Boolean).length,
	requirementsFile: shown(requirementsPath),
	sharedMissing,
	runs,
	stale,
	rows,
	traced,
	unknown,
	summary
};

mkdirSync(outDir, { recursive: true });
const htmlPath = join(outDir, 'traceability.html');
const pdfPath = join(outDir, 'traceability.pdf');
writeFileSync(htmlPath, renderHtml(data));
writeFileSync(pdfPath, await renderPdf(data));
console.log(`validation-report: ${shown(htmlPath)}`);
console.log(`validation-report: ${shown(pdfPath)}`);
for (const r of runs)
	console.log(
		`validation-report: ${r.part}: ${r.present ? `${r.passed} passed, ${r.failed} failed` : 'not run'}`
	);
if (sharedMissing?.length)
	console.log(
		`validation-report: missing from ${shown(requirementsPath)}: ${sharedMissing.join(', ')}`
	);
console.log(summary.line);
