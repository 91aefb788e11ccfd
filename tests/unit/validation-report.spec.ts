import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PDFDocument } from 'pdf-lib';
import { afterAll, describe, expect, it } from 'vitest';
import {
	citedIds,
	findTests,
	parseRequirements,
	partOf,
	readPlaywright,
	readVitest,
	resultOf,
	sharedRequirementIds,
	summarise,
	trace,
	type PartRun
} from '../../scripts/lib/traceability.js';

// The validation report's rules (10/10 item 7; REQUIREMENTS CS-VAL1): how docs/requirements.md
// is read, which tests cite which ID, how results of the last run are matched to them, and a run
// of `npm run validation-report` on the real tree. Small fixtures, no database; the rules are the
// project's own (common practice, no source).

const root = new URL('../..', import.meta.url).pathname;
const known = new Set(['AT1', 'AT2', 'AT3', 'AT4', 'AT5', 'AT6', 'SE1', 'SE2', 'SE3', 'CS-PM1']);

describe('the requirements list (CS-VAL1)', () => {
	it('reads groups and "- **ID** — statement *Basis: …*" lines, without Markdown code marks', () => {
		const { requirements, problems } = parseRequirements(
			[
				'# Title',
				'Prose is not read. - **AT9** in a sentence neither.',
				'## Audit trail',
				'- **AT1** — A trail of who, what, when and why. *Basis: P11 11.10(e); A11 §9*',
				'## Added by Countersign',
				'- **CS-PM1** — One work order per `due date`.'
			].join('\n')
		);
		expect(problems).toEqual([]);
		expect(requirements).toEqual([
			{
				id: 'AT1',
				group: 'Audit trail',
				statement: 'A trail of who, what, when and why.',
				basis: 'P11 11.10(e); A11 §9',
				line: 4
			},
			{
				id: 'CS-PM1',
				group: 'Added by Countersign',
				statement: 'One work order per due date.',
				basis: '',
				line: 6
			}
		]);
	});

	it('names a line out of layout, a malformed ID and an ID listed twice', () => {
		const { requirements, problems } = parseRequirements(
			['- **AT1** — one', '- **AT1** — again', '- **at2** — lower case', '- **AT3**: no dash'].join(
				'\n'
			)
		);
		expect(requirements.map((r) => r.id)).toEqual(['AT1']);
		expect(problems).toEqual([
			'line 2: AT1 is listed twice',
			'line 3: "at2" is not an ID (AT1, CS-PM1)',
			'line 4: not "- **ID** — statement *Basis: …*"'
		]);
	});

	it('takes the IDs of the shared list from its table rows', () => {
		expect(
			sharedRequirementIds('| ID | source |\n|---|---|\n| AT1 | P11 | x |\n| ES10 | A11 | y |\n')
		).toEqual(['AT1', 'ES10']);
	});
});

describe('which IDs a text cites (CS-VAL1)', () => {
	it('lists, ranges written with a dash, and CS- IDs', () => {
		expect(citedIds('(AT1, AT2) and SE1–SE3; CS-PM1.', known).ids).toEqual([
			'AT1',
			'AT2',
			'SE1',
			'SE2',
			'SE3',
			'CS-PM1'
		]);
		expect(citedIds('SE1–3', known).ids).toEqual(['SE1', 'SE2', 'SE3']);
	});

	it('does not read a standard’s name, a longer number or a version as an ID', () => {
		expect(citedIds('IAPWS-IF97, ES2020, AT1.5, AT12 and v1.AT3', known)).toEqual({
			ids: [],
			unknown: ['AT12']
		});
	});

	it('an ID with a known prefix that is not listed, or any in a REQUIREMENTS comment, is unknown', () => {
		expect(citedIds('AT99 and XY1', known)).toEqual({ ids: [], unknown: ['AT99'] });
		expect(citedIds('REQUIREMENTS AT1, SD1 (segregation)', known)).toEqual({
			ids: ['AT1'],
			unknown: ['SD1']
		});
	});

	it('sorts test files into the projects of the run', () => {
		expect(partOf('tests/e2e/work.e2e.ts')).toBe('e2e');
		expect(partOf('tests/integration/pm.spec.ts')).toBe('integration');
		expect(partOf('src/lib/work.spec.ts')).toBe('unit');
		expect(partOf('tests/unit/contrast.spec.ts')).toBe('unit');
	});
});

const fixture = `import { describe, expect, it } from 'vitest';

// The header of the file: REQUIREMENTS AT1.
const one = 1;

/** A helper's comment cites nothing: AT6. */
function helper() {
	return one;
}

describe('a block (AT2)', () => {
	it('a test citing AT3 in its title', () => {
		expect(helper()).toBe(1);
	});

	// A comment just above a test: AT4.
	it('a test with a comment above', () => {});

	it('a test with a comment inside', () => {
		// checks AT5 here
		expect(1).toBe(1);
	});

	it.each([1, 2])('each %s', (n) => {
		expect(n).toBeGreaterThan(0);
	});
});

for (const x of ['a', 'b']) it(\`loop \${x} (SE2)\`, () => {});
it.skip('skipped one', () => {});
`;

describe('which tests cite an ID (CS-VAL1)', () => {
	const { tests, unknown } = findTests('tests/unit/fixture.spec.ts', fixture, known);
	const named = (title: string) => tests.find((t) => t.titles.at(-1) === title)!;

	it('finds every it() and test() call, with its describe titles and line', () => {
		expect(tests.map((t) => t.titles)).toEqual([
			['a block (AT2)', 'a test citing AT3 in its title'],
			['a block (AT2)', 'a test with a comment above'],
			['a block (AT2)', 'a test with a comment inside'],
			['a block (AT2)', 'each %s'],
			['loop ${x} (SE2)'],
			['skipped one']
		]);
		expect(named('a test citing AT3 in its title').line).toBe(12);
		expect(tests.every((t) => t.part === 'unit')).toBe(true);
	});

	it('the title, a comment at the test, the describe block and the file header each cite', () => {
		const cites = (title: string) => Object.fromEntries(named(title).cites);
		expect(cites('a test citing AT3 in its title')).toEqual({
			AT3: 'title',
			AT2: 'describe',
			AT1: 'file'
		});
		expect(cites('a test with a comment above')).toEqual({
			AT4: 'comment',
			AT2: 'describe',
			AT1: 'file'
		});
		expect(cites('a test with a comment inside')).toEqual({
			AT5: 'comment',
			AT2: 'describe',
			AT1: 'file'
		});
		expect(cites('loop ${x} (SE2)')).toEqual({ SE2: 'title', AT1: 'file' });
		expect(cites('skipped one')).toEqual({ AT1: 'file' });
		expect(tests.some((t) => t.cites.has('AT6'))).toBe(false);
		expect(unknown).toEqual([]);
	});

	it('a browser test file: test.describe is a block, test.step is not a test (nor its title a citation)', () => {
		const e2e = findTests(
			'tests/e2e/x.e2e.ts',
			`import { test } from '@playwright/test';
test.describe('journey (AT2)', () => {
	test('one', async () => {
		await test.step('a step’s title cites nothing (AT4)', async () => {
			// but a comment in it does: AT3
		});
	});
});
`,
			known
		);
		expect(e2e.tests).toHaveLength(1);
		expect(e2e.tests[0]!.part).toBe('e2e');
		expect(Object.fromEntries(e2e.tests[0]!.cites)).toEqual({ AT2: 'describe', AT3: 'comment' });
	});

	describe('results of the last run', () => {
		const vitest = readVitest(
			'unit',
			'test-results/unit.json',
			{
				startTime: Date.UTC(2026, 11, 2, 16, 0),
				testResults: [
					{
						name: `${root}tests/unit/fixture.spec.ts`,
						status: 'failed',
						assertionResults: [
							{
								ancestorTitles: ['a block (AT2)'],
								title: 'a test citing AT3 in its title',
								status: 'passed'
							},
							{ ancestorTitles: ['a block (AT2)'], title: 'each 1', status: 'passed' },
							{
								ancestorTitles: ['a block (AT2)'],
								title: 'each 2',
								status: 'failed',
								failureMessages: [
									'\u001b[31mAssertionError: expected 2 to be 3\u001b[39m\n    at fixture'
								]
							},
							{ ancestorTitles: [], title: 'loop a (SE2)', status: 'passed' },
							{ ancestorTitles: [], title: 'loop b (SE2)', status: 'passed' },
							{ ancestorTitles: [], title: 'skipped one', status: 'skipped' }
						]
					},
					{
						name: `${root}tests/unit/broken.spec.ts`,
						status: 'failed',
						message: 'SyntaxError',
						assertionResults: []
					}
				]
			},
			root
		);
		const runs = new Map<PartRun['part'], PartRun>([['unit', vitest]]);
		const result = (title: string) => resultOf(named(title), runs);

		it('reads Vitest’s JSON report: counts, start, a file that failed to load', () => {
			expect(vitest).toMatchObject({ present: true, passed: 4, failed: 2, skipped: 1 });
			expect(vitest.startedAt?.toISOString()).toBe('2026-12-02T16:00:00.000Z');
			expect(vitest.fileErrors.get('tests/unit/broken.spec.ts')).toBe('SyntaxError');
		});

		it('matches by file and titles; a title with placeholders matches each run, failed when one failed', () => {
			expect(result('a test citing AT3 in its title')).toEqual({
				status: 'passed',
				message: null,
				runs: 1
			});
			expect(result('each %s')).toEqual({
				status: 'failed',
				message: 'AssertionError: expected 2 to be 3 at fixture',
				runs: 2
			});
			expect(result('loop ${x} (SE2)')).toMatchObject({ status: 'passed', runs: 2 });
			expect(result('skipped one').status).toBe('skipped');
			expect(result('a test with a comment above')).toEqual({
				status: 'not run',
				message: null,
				runs: 0
			});
		});

		it('a file that failed to load fails its tests; a part without its report did not run', () => {
			const broken = findTests('tests/unit/broken.spec.ts', "it('x (AT1)', () => {});", known);
			expect(resultOf(broken.tests[0]!, runs).status).toBe('failed');
			const integration = findTests(
				'tests/integration/y.spec.ts',
				"it('y (AT1)', () => {});",
				known
			);
			expect(resultOf(integration.tests[0]!, runs).status).toBe('not run');
		});

		it('requirement → tests → standing, and the summary line', () => {
			const requirements = ['AT1', 'AT3', 'AT4', 'AT5', 'SE2', 'SE3'].map((id, line) => ({
				id,
				group: 'g',
				statement: id,
				basis: '',
				line
			}));
			const { rows } = trace(requirements, tests, runs);
			expect(Object.fromEntries(rows.map((r) => [r.requirement.id, r.standing]))).toEqual({
				AT1: 'failing',
				AT3: 'passed',
				AT4: 'not run',
				AT5: 'not run',
				SE2: 'passed',
				SE3: 'not covered'
			});
			expect(summarise(rows).line).toBe('6 requirements, 5 covered, 1 not covered, 1 failing');
		});
	});

	it('reads Playwright’s JSON report and matches a browser test by file and line', () => {
		const run = readPlaywright(
			'test-results/e2e-results.json',
			{
				config: {
					rootDir: `${root}tests/e2e`,
					argv: ['node', 'playwright', 'test', 'tests/e2e/x.e2e.ts']
				},
				stats: { startTime: '2026-12-02T16:35:48.190Z' },
				suites: [
					{
						title: 'x.e2e.ts',
						file: 'x.e2e.ts',
						specs: [],
						suites: [
							{
								title: 'journey (AT2)',
								file: 'x.e2e.ts',
								specs: [
									{
										title: 'renamed since',
										file: 'x.e2e.ts',
										line: 3,
										tests: [
											{
												status: 'unexpected',
												results: [
													{ status: 'failed', errors: [{ message: 'Timeout 5000ms exceeded.' }] }
												]
											}
										]
									}
								]
							}
						]
					}
				],
				errors: []
			},
			root
		);
		expect(run).toMatchObject({ present: true, passed: 0, failed: 1 });
		expect(run.notes).toEqual(['a partial run of tests/e2e/x.e2e.ts']);
		const e2e = findTests(
			'tests/e2e/x.e2e.ts',
			"import { test } from '@playwright/test';\ntest.describe('journey (AT2)', () => {\n\ttest('one', async () => {});\n});\n",
			known
		);
		expect(resultOf(e2e.tests[0]!, new Map([['e2e', run]]))).toEqual({
			status: 'failed',
			message: 'Timeout 5000ms exceeded.',
			runs: 1
		});
	});
});

describe('npm run validation-report on the real tree (CS-VAL1)', () => {
	const out = mkdtempSync(join(tmpdir(), 'countersign-validation-'));
	afterAll(() => rmSync(out, { recursive: true, force: true }));
	const shared = join(root, '../shared/REQUIREMENTS.md');

	it.runIf(existsSync(shared))(
		'docs/requirements.md holds every ID of shared/REQUIREMENTS.md, each once, in its layout',
		() => {
			const ours = parseRequirements(readFileSync(join(root, 'docs/requirements.md'), 'utf8'));
			expect(ours.problems).toEqual([]);
			const ids = new Set(ours.requirements.map((r) => r.id));
			const theirs = sharedRequirementIds(readFileSync(shared, 'utf8'));
			expect(theirs.length).toBeGreaterThan(40);
			expect(theirs.filter((id) => !ids.has(id))).toEqual([]);
			// What the product adds has IDs of its own prefix, never one of the shared list's.
			const added = ours.requirements.filter((r) => !theirs.includes(r.id));
			expect(added.length).toBeGreaterThan(0);
			expect(added.every((r) => r.id.startsWith('CS-'))).toBe(true);
		}
	);

	it(
		'writes the HTML and a valid PDF and prints the summary line',
		{ timeout: 120_000 },
		async () => {
			const run = spawnSync(process.execPath, ['scripts/validation-report.js', '--out', out], {
				cwd: root,
				encoding: 'utf8'
			});
			expect(run.stderr).toBe('');
			expect(run.status).toBe(0);
			const summary = /^(\d+) requirements, (\d+) covered, (\d+) not covered, (\d+) failing$/m.exec(
				run.stdout
			);
			expect(summary).not.toBeNull();
			const [, n, covered, notCovered] = summary!.map(Number);
			expect(covered! + notCovered!).toBe(n);
			expect(run.stdout).toContain(join(out, 'traceability.pdf'));

			const html = readFileSync(join(out, 'traceability.html'), 'utf8');
			expect(html).toMatch(/^<!doctype html>\n<html lang="en">/);
			expect(html).not.toMatch(/<(link|script)\b|src="http/);
			expect(html).toContain(summary![0]);
			for (const id of ['AT1', 'MR5', 'CS-VAL1']) expect(html).toContain(`<tr id="${id}">`);

			const pdf = await PDFDocument.load(readFileSync(join(out, 'traceability.pdf')));
			expect(pdf.getTitle()).toBe('Requirements traceability — Countersign');
			expect(pdf.getSubject()).toBe(summary![0]);
			expect(pdf.getPageCount()).toBeGreaterThan(1);
		}
	);
});
