// The requirements traceability of `npm run validation-report` (10/10 item 7): the project's
// requirements list (docs/requirements.md), the tests that cite each ID (found in the test files'
// syntax with the TypeScript compiler's parser, never by running them), and their results in the
// last run (the JSON reports scripts/test.js leaves in test-results/). Pure functions over text
// and parsed JSON; scripts/validation-report.js reads the files and writes the report
// (scripts/lib/traceability-render.js).
import ts from 'typescript';

/** @typedef {{ id: string, group: string, statement: string, basis: string, line: number }} Requirement */
/** @typedef {'unit' | 'integration' | 'e2e'} Part */
/** @typedef {'passed' | 'failed' | 'skipped' | 'not run'} Outcome */
/**
 * How a test cites an ID, most specific first: in its own title; in a comment just above it or
 * inside its body; in the title of (or a comment just above) a describe block around it; in the
 * file's header comment.
 * @typedef {'title' | 'comment' | 'describe' | 'file'} CitedBy
 */
/**
 * A test as written in its file.
 * @typedef {{ file: string, part: Part, titles: string[], patterns: (RegExp | null)[],
 *   line: number, column: number, cites: Map<string, CitedBy> }} TestCase
 */
/** @typedef {{ id: string, file: string, line: number }} UnknownCitation */
/**
 * One test's result in a run's report (several for a test written once with `each` or in a loop).
 * @typedef {{ file: string, titles: string[], line: number | null, status: Outcome,
 *   message: string | null }} RunResult
 */
/**
 * One part of the last run, from its report file (or its absence).
 * @typedef {{ part: Part, report: string, present: boolean, startedAt: Date | null,
 *   passed: number, failed: number, skipped: number, results: RunResult[],
 *   fileErrors: Map<string, string>, notes: string[] }} PartRun
 */
/**
 * A test with its result.
 * @typedef {TestCase & { status: Outcome, message: string | null, runs: number }} TracedTest
 */
/** @typedef {'passed' | 'failing' | 'partly run' | 'not run' | 'not covered'} Standing */
/** @typedef {{ requirement: Requirement, tests: TracedTest[], standing: Standing }} TraceRow */

/** How the rule reads in the report. */
export const CITATION_RULE = [
	'A test cites a requirement when the requirement’s ID appears in the test’s own title; in a comment just above the test or inside its body; in the title of a describe block around it, or a comment just above that block (every test inside it); or in the file’s header comment — the comments before and among the imports and above the first statement after them (every test of the file).',
	'Test files are tests/**/*.spec.ts, tests/**/*.e2e.ts and src/**/*.spec.ts, read with the TypeScript parser: a test is a call of it() or test() (with .skip, .only, .each and the like), a describe block a call of describe() or test.describe(). Comments elsewhere (a helper function’s) cite nothing.',
	'An ID is two capital letters and a number (AT1) or CS-, capital letters and a number (CS-PM1); “SE1–SE3” cites SE1, SE2 and SE3. An ID with a known prefix that is not in the list, or any such token in a comment that says REQUIREMENTS, is listed as cited but unknown.',
	'Results come from the last run’s reports in test-results/ (Vitest JSON for the unit and integration projects, Playwright JSON for the browser tests). A browser test is matched by its file and line, a Vitest test by its file and titles (a title written with each-placeholders or ${…} matches every title it produces). A test written once but run several times failed when any run failed. A test in no report is “not run”; so is every test of a part whose report is missing. A file that failed to load fails all its tests.',
	'In the matrix, the tests that cite a requirement only through their file’s header are shown as one line per file with their counts (and each failed one by name).',
	'A requirement is passed when every test citing it passed, failing when any failed, partly run when some passed and the others did not run (or were skipped), not run when none ran, and not covered when no test cites it.'
];

const ID = /^(?:[A-Z]{2}\d+|CS-[A-Z]+\d+)$/;
const REQUIREMENT_LINE = /^- \*\*([^*]+)\*\* — (.*?)\s*(?:\*Basis: ([^*]*)\*)?\s*$/;

/**
 * Reads the requirements list: `## ` headings are groups, `- **ID** — statement *Basis: …*`
 * lines requirements. A `- **…**` line that does not fit, a malformed ID or a second use of an
 * ID is a problem (the report refuses to run on a broken list).
 * @param {string} text
 * @returns {{ requirements: Requirement[], problems: string[] }}
 */
export function parseRequirements(text) {
	/** @type {Requirement[]} */
	const requirements = [];
	/** @type {string[]} */
	const problems = [];
	const seen = new Set();
	let group = '';
	text.split(/\r?\n/).forEach((raw, i) => {
		const line = raw.trimEnd();
		const heading = /^## (.+)$/.exec(line);
		if (heading) {
			group = heading[1]?.trim() ?? '';
			return;
		}
		if (!line.startsWith('- **')) return;
		const m = REQUIREMENT_LINE.exec(line);
		if (!m) {
			problems.push(`line ${i + 1}: not "- **ID** — statement *Basis: …*"`);
			return;
		}
		const id = (m[1] ?? '').trim();
		// The statement as text: Markdown's code marks dropped.
		const statement = (m[2] ?? '').replace(/`/g, '').trim();
		if (!ID.test(id)) problems.push(`line ${i + 1}: "${id}" is not an ID (AT1, CS-PM1)`);
		else if (seen.has(id)) problems.push(`line ${i + 1}: ${id} is listed twice`);
		else if (!statement) problems.push(`line ${i + 1}: ${id} has no statement`);
		else {
			seen.add(id);
			requirements.push({ id, group, statement, basis: (m[3] ?? '').trim(), line: i + 1 });
		}
	});
	return { requirements, problems };
}

/**
 * The IDs of ../shared/REQUIREMENTS.md: the first cell of its table rows.
 * @param {string} text
 */
export function sharedRequirementIds(text) {
	return [...text.matchAll(/^\|\s*([A-Z]{2}\d+)\s*\|/gm)].map((m) => /** @type {string} */ (m[1]));
}

/** The letters of an ID before its number: AT1 → AT, CS-PM2 → CS-PM. */
const prefixOf = (/** @type {string} */ id) => id.replace(/\d+$/, '');

const TOKEN =
	/(?<![\w.-])(CS-[A-Z]+\d+|[A-Z]{2}\d{1,2})(?:(?:\s*[–—-]\s*(CS-[A-Z]+|[A-Z]{2})|–)(\d{1,2}))?(?!\w)(?!\.\d)/g;

/**
 * The IDs a piece of text cites: known ones, and unknown ones (a known prefix, or in text that
 * says REQUIREMENTS). Ranges such as SE1–SE3 stand for every ID between.
 * @param {string} text
 * @param {Set<string>} known
 * @returns {{ ids: string[], unknown: string[] }}
 */
export function citedIds(text, known) {
	const prefixes = new Set([...known].map(prefixOf));
	const loose = /REQUIREMENTS/.test(text);
	/** @type {string[]} */
	const ids = [];
	/** @type {string[]} */
	const unknown = [];
	for (const m of text.matchAll(TOKEN)) {
		const first = /** @type {string} */ (m[1]);
		const prefix = prefixOf(first);
		const tokens = [first];
		const to = m[3] ? Number(m[3]) : NaN;
		const from = Number(first.slice(prefix.length));
		if (m[3] && (!m[2] || m[2] === prefix) && to > from && to - from <= 20)
			for (let n = from + 1; n <= to; n++) tokens.push(`${prefix}${n}`);
		else if (m[3] && m[2]) tokens.push(`${m[2]}${m[3]}`);
		for (const t of tokens) {
			if (known.has(t)) {
				if (!ids.includes(t)) ids.push(t);
			} else if ((prefixes.has(prefixOf(t)) || loose) && !unknown.includes(t)) unknown.push(t);
		}
	}
	return { ids, unknown };
}

/** Which project of the run a test file belongs to (vite.config.ts, playwright.config.ts). */
export function partOf(/** @type {string} */ file) {
	if (file.endsWith('.e2e.ts')) return /** @type {Part} */ ('e2e');
	if (file.startsWith('tests/integration/')) return /** @type {Part} */ ('integration');
	return /** @type {Part} */ ('unit');
}

/** Whether a repository-relative path is a test file the report reads. */
export function isTestFile(/** @type {string} */ file) {
	return (
		(file.startsWith('tests/') && /\.(spec|e2e)\.ts$/.test(file)) ||
		(file.startsWith('src/') && file.endsWith('.spec.ts'))
	);
}

const BASES = /** @type {Record<string, 'test' | 'describe'>} */ ({
	it: 'test',
	test: 'test',
	describe: 'describe',
	suite: 'describe'
});
const MODIFIERS = new Set([
	'skip',
	'only',
	'concurrent',
	'sequential',
	'todo',
	'fails',
	'shuffle',
	'serial',
	'parallel',
	'fixme',
	'slow',
	'fail'
]);

/** @param {ts.Expression} e @returns {string[] | null} */
function names(e) {
	if (ts.isIdentifier(e)) return [e.text];
	if (ts.isPropertyAccessExpression(e)) {
		const left = names(e.expression);
		return left ? [...left, e.name.text] : null;
	}
	return null;
}

/** @param {string[]} n @param {boolean} each */
function kindOf(n, each) {
	const [base, ...rest] = n;
	let kind = base ? BASES[base] : undefined;
	if (!kind) return null;
	for (const m of rest) {
		if (m === 'describe') kind = 'describe';
		else if (!MODIFIERS.has(m)) return null;
	}
	return { kind, each };
}

/** Whether a call defines a test or a describe block, and whether its title is a template (each). */
function callKind(/** @type {ts.CallExpression} */ call) {
	const callee = call.expression;
	if (ts.isCallExpression(callee)) {
		const inner = names(callee.expression);
		const last = inner?.at(-1);
		if (!inner || !last || !['each', 'for', 'skipIf', 'runIf'].includes(last)) return null;
		return kindOf(inner.slice(0, -1), last === 'each' || last === 'for');
	}
	const n = names(callee);
	return n ? kindOf(n, false) : null;
}

const escape = (/** @type {string} */ s) => s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
const HOLE = '[\\s\\S]*?';

/** Vitest's each placeholders (%s, %j, %#, $name …) in an escaped title become holes. */
const placeholders = (/** @type {string} */ escaped) =>
	escaped.replace(/%%/g, '%').replace(/%[sdifjoOc#]|%\\\$|\\\$[A-Za-z_][\w.]*/g, HOLE);

/**
 * A title's words (as written) and the pattern of the titles it produces at run time (null when
 * it is not written as text, e.g. a variable).
 * @param {ts.Expression | undefined} arg
 * @param {boolean} each
 * @param {ts.SourceFile} sf
 * @returns {{ text: string, pattern: RegExp | null }}
 */
function titleOf(arg, each, sf) {
	/** @returns {{ text: string, source: string } | null} */
	const parts = (/** @type {ts.Expression} */ e) => {
		if (ts.isStringLiteral(e) || ts.isNoSubstitutionTemplateLiteral(e))
			return { text: e.text, source: escape(e.text) };
		if (ts.isTemplateExpression(e)) {
			let text = e.head.text;
			let source = escape(e.head.text);
			for (const span of e.templateSpans) {
				text += `\${${span.expression.getText(sf)}}${span.literal.text}`;
				source += HOLE + escape(span.literal.text);
			}
			return { text, source };
		}
		if (ts.isParenthesizedExpression(e)) return parts(e.expression);
		if (ts.isBinaryExpression(e) && e.operatorToken.kind === ts.SyntaxKind.PlusToken) {
			const l = parts(e.left);
			const r = parts(e.right);
			return {
				text: (l?.text ?? `\${${e.left.getText(sf)}}`) + (r?.text ?? `\${${e.right.getText(sf)}}`),
				source: (l?.source ?? HOLE) + (r?.source ?? HOLE)
			};
		}
		return null;
	};
	if (!arg) return { text: '', pattern: null };
	const p = parts(arg);
	if (!p) return { text: arg.getText(sf), pattern: null };
	return {
		text: p.text,
		pattern: new RegExp(`^${each ? placeholders(p.source) : p.source}$`)
	};
}

/** The text of the comments in a range list. */
const commentText = (
	/** @type {string} */ text,
	/** @type {ts.CommentRange[] | undefined} */ ranges
) => (ranges ?? []).map((r) => text.slice(r.pos, r.end)).join('\n');

/** Every comment inside a node (leading and trailing trivia of its descendants, closing braces too). */
function commentsWithin(/** @type {ts.Node} */ node, /** @type {string} */ text) {
	/** @type {Map<number, string>} */
	const found = new Map();
	const add = (/** @type {ts.CommentRange[] | undefined} */ ranges) => {
		for (const r of ranges ?? []) found.set(r.pos, text.slice(r.pos, r.end));
	};
	const visit = (/** @type {ts.Node} */ n) => {
		add(ts.getLeadingCommentRanges(text, n.pos));
		add(ts.getTrailingCommentRanges(text, n.end));
		if (ts.isBlock(n)) add(ts.getLeadingCommentRanges(text, n.statements.end));
		ts.forEachChild(n, visit);
	};
	ts.forEachChild(node, visit);
	if (ts.isBlock(node)) add(ts.getLeadingCommentRanges(text, node.statements.end));
	return [...found.values()].join('\n');
}

const RANK = /** @type {Record<CitedBy, number>} */ ({
	title: 0,
	comment: 1,
	describe: 2,
	file: 3
});

/** @param {Map<string, CitedBy>} cites @param {string[]} ids @param {CitedBy} by */
function cite(cites, ids, by) {
	for (const id of ids) {
		const had = cites.get(id);
		if (!had || RANK[by] < RANK[had]) cites.set(id, by);
	}
}

/**
 * The tests of one file with the IDs each cites (by the rule of CITATION_RULE), and the IDs cited
 * that are not in the list.
 * @param {string} file repository-relative path
 * @param {string} text
 * @param {Set<string>} known
 * @returns {{ tests: TestCase[], unknown: UnknownCitation[] }}
 */
export function findTests(file, text, known) {
	const sf = ts.createSourceFile(file, text, ts.ScriptTarget.Latest, true, ts.ScriptKind.TS);
	/** @type {TestCase[]} */
	const tests = [];
	/** @type {UnknownCitation[]} */
	const unknown = [];
	const lineOf = (/** @type {number} */ pos) => sf.getLineAndCharacterOfPosition(pos).line + 1;
	const read = (/** @type {string} */ t, /** @type {number} */ pos) => {
		const c = citedIds(t, known);
		for (const id of c.unknown)
			if (!unknown.some((u) => u.id === id && u.file === file))
				unknown.push({ id, file, line: lineOf(pos) });
		return c.ids;
	};

	// The file's header: comments before and among the imports and above the first statement after them.
	/** @type {ts.CommentRange[]} */
	const header = [];
	for (const statement of sf.statements) {
		header.push(...(ts.getLeadingCommentRanges(text, statement.pos) ?? []));
		if (!ts.isImportDeclaration(statement)) break;
	}
	if (!sf.statements.length) header.push(...(ts.getLeadingCommentRanges(text, 0) ?? []));
	const fileIds = header.flatMap((r) => read(text.slice(r.pos, r.end), r.pos));
	const inHeader = new Set(header.map((r) => r.pos));
	/** Comments just above a call that are not the file's header. */
	const above = (/** @type {ts.Node} */ node) =>
		commentText(
			text,
			ts.getLeadingCommentRanges(text, node.pos)?.filter((r) => !inHeader.has(r.pos))
		);

	/** @typedef {{ text: string, pattern: RegExp | null, ids: string[] }} Block */
	const visit = (/** @type {ts.Node} */ node, /** @type {Block[]} */ blocks) => {
		if (ts.isCallExpression(node)) {
			const kind = callKind(node);
			if (kind) {
				const title = titleOf(node.arguments[0], kind.each, sf);
				const titleIds = read(title.text, node.getStart(sf));
				const aboveIds = read(above(node), node.getStart(sf));
				if (kind.kind === 'describe') {
					const block = { ...title, ids: [...titleIds, ...aboveIds] };
					for (const arg of node.arguments.slice(1)) visit(arg, [...blocks, block]);
					return;
				}
				const body = [...node.arguments]
					.reverse()
					.find((a) => ts.isArrowFunction(a) || ts.isFunctionExpression(a));
				const inner = body ? read(commentsWithin(body, text), body.getStart(sf)) : [];
				/** @type {Map<string, CitedBy>} */
				const cites = new Map();
				cite(cites, titleIds, 'title');
				cite(cites, [...aboveIds, ...inner], 'comment');
				for (const b of blocks) cite(cites, b.ids, 'describe');
				cite(cites, fileIds, 'file');
				const at = sf.getLineAndCharacterOfPosition(node.getStart(sf));
				tests.push({
					file,
					part: partOf(file),
					titles: [...blocks.map((b) => b.text), title.text],
					patterns: [...blocks.map((b) => b.pattern), title.pattern],
					line: at.line + 1,
					column: at.character + 1,
					cites
				});
				return;
			}
		}
		ts.forEachChild(node, (child) => visit(child, blocks));
	};
	visit(sf, []);
	return { tests, unknown };
}

/** Strips terminal colours and keeps the first lines of a failure message. */
export function shortMessage(/** @type {string | undefined | null} */ message) {
	if (!message) return null;
	// eslint-disable-next-line no-control-regex
	const plain = message.replace(/\u001b\[[0-9;]*m/g, '').trim();
	const lines = plain.split('\n').filter((l) => l.trim());
	const short = lines.slice(0, 3).join(' ').replace(/\s+/g, ' ');
	return short.length > 300 ? `${short.slice(0, 297)}…` : short;
}

/** @param {string} p */
const normalisePath = (p) => p.replace(/\\/g, '/');

/**
 * A part of the run from Vitest's JSON report (null when the part did not run).
 * @param {Part} part
 * @param {string} report the report's path, as shown
 * @param {any} json the parsed report, or null when there is none
 * @param {string} root the repository's absolute path
 * @returns {PartRun}
 */
export function readVitest(part, report, json, root) {
	/** @type {PartRun} */
	const run = emptyRun(part, report);
	if (!json || !Array.isArray(json.testResults)) return run;
	run.present = true;
	run.startedAt = typeof json.startTime === 'number' ? new Date(json.startTime) : null;
	const base = normalisePath(root).replace(/\/?$/, '/');
	for (const suite of json.testResults) {
		const file = normalisePath(String(suite.name ?? '')).replace(base, '');
		const assertions = Array.isArray(suite.assertionResults) ? suite.assertionResults : [];
		if (
			suite.status === 'failed' &&
			!assertions.some((/** @type {any} */ a) => a.status === 'failed')
		)
			run.fileErrors.set(file, shortMessage(suite.message) ?? 'the file failed to run');
		for (const a of assertions) {
			/** @type {Outcome} */
			const status =
				a.status === 'passed' ? 'passed' : a.status === 'failed' ? 'failed' : 'skipped';
			run.results.push({
				file,
				titles: [...(a.ancestorTitles ?? []), a.title],
				line: typeof a.location?.line === 'number' ? a.location.line : null,
				status,
				message: status === 'failed' ? shortMessage(a.failureMessages?.[0]) : null
			});
		}
	}
	count(run);
	return run;
}

/**
 * The browser tests of the run from Playwright's JSON report.
 * @param {string} report the report's path, as shown
 * @param {any} json the parsed report, or null when there is none
 * @param {string} root the repository's absolute path
 * @returns {PartRun}
 */
export function readPlaywright(report, json, root) {
	const run = emptyRun('e2e', report);
	if (!json || !Array.isArray(json.suites)) return run;
	run.present = true;
	run.startedAt = json.stats?.startTime ? new Date(json.stats.startTime) : null;
	const base = normalisePath(root).replace(/\/?$/, '/');
	const testDir = normalisePath(json.config?.rootDir ?? `${root}/tests/e2e`).replace(/\/?$/, '/');
	const rel = (/** @type {string} */ f) => normalisePath(testDir + f).replace(base, '');
	/** @param {any} suite @param {string[]} titles */
	const walk = (suite, titles) => {
		for (const spec of suite.specs ?? []) {
			/** @type {Outcome[]} */
			const outcomes = [];
			/** @type {string | null} */
			let message = null;
			for (const t of spec.tests ?? []) {
				const results = Array.isArray(t.results) ? t.results : [];
				if (t.status === 'unexpected' || t.status === 'flaky') {
					outcomes.push('failed');
					const r = results.find((/** @type {any} */ r) => r.status !== 'passed');
					message ??=
						(t.status === 'flaky' ? 'flaky (passed only on a retry): ' : '') +
						(shortMessage(r?.errors?.[0]?.message ?? r?.error?.message) ?? 'failed');
				} else if (
					t.status === 'skipped' ||
					results.every((/** @type {any} */ r) => r.status === 'skipped')
				)
					outcomes.push('skipped');
				else outcomes.push('passed');
			}
			run.results.push({
				file: rel(spec.file ?? suite.file ?? ''),
				titles: [...titles, spec.title],
				line: typeof spec.line === 'number' ? spec.line : null,
				status: combine(outcomes),
				message
			});
		}
		for (const child of suite.suites ?? []) walk(child, [...titles, child.title]);
	};
	for (const fileSuite of json.suites) walk(fileSuite, []);
	for (const e of json.errors ?? [])
		run.notes.push(`the run reported an error: ${shortMessage(e?.message) ?? 'unknown'}`);
	const files = (json.config?.argv ?? []).filter((/** @type {string} */ a) => /\.e2e\.ts$/.test(a));
	if (files.length) run.notes.push(`a partial run of ${files.join(', ')}`);
	count(run);
	return run;
}

/** @param {Part} part @param {string} report @returns {PartRun} */
function emptyRun(part, report) {
	return {
		part,
		report,
		present: false,
		startedAt: null,
		passed: 0,
		failed: 0,
		skipped: 0,
		results: [],
		fileErrors: new Map(),
		notes: []
	};
}

/** @param {PartRun} run */
function count(run) {
	run.passed = run.results.filter((r) => r.status === 'passed').length;
	run.failed = run.results.filter((r) => r.status === 'failed').length + run.fileErrors.size;
	run.skipped = run.results.filter((r) => r.status === 'skipped').length;
}

/**
 * Several outcomes of one test as one: failed when any failed, else passed when any passed.
 * @param {Outcome[]} outcomes
 * @returns {Outcome}
 */
export function combine(outcomes) {
	if (outcomes.includes('failed')) return 'failed';
	if (outcomes.includes('passed')) return 'passed';
	if (outcomes.includes('skipped')) return 'skipped';
	return 'not run';
}

/**
 * A test's result in its part of the run.
 * @param {TestCase} test
 * @param {Map<Part, PartRun>} runs
 * @returns {{ status: Outcome, message: string | null, runs: number }}
 */
export function resultOf(test, runs) {
	const run = runs.get(test.part);
	if (!run?.present) return { status: 'not run', message: null, runs: 0 };
	const fileError = run.fileErrors.get(test.file);
	if (fileError) return { status: 'failed', message: `the file failed: ${fileError}`, runs: 0 };
	const inFile = run.results.filter((r) => r.file === test.file);
	let matched = inFile.filter((r) => r.line !== null && r.line === test.line);
	if (!matched.length)
		matched = inFile.filter(
			(r) =>
				r.titles.length === test.patterns.length &&
				test.patterns.every((p, i) => (p ? p.test(r.titles[i] ?? '') : false))
		);
	return {
		status: combine(matched.map((r) => r.status)),
		message: matched.find((r) => r.status === 'failed')?.message ?? null,
		runs: matched.length
	};
}

/**
 * Requirement → the tests citing it → their results, and where each requirement stands.
 * @param {Requirement[]} requirements
 * @param {TestCase[]} tests
 * @param {Map<Part, PartRun>} runs
 * @returns {{ rows: TraceRow[], traced: TracedTest[] }}
 */
export function trace(requirements, tests, runs) {
	/** @type {TracedTest[]} */
	const traced = tests.map((t) => ({ ...t, ...resultOf(t, runs) }));
	const rows = requirements.map((requirement) => {
		const citing = traced.filter((t) => t.cites.has(requirement.id));
		return { requirement, tests: citing, standing: standingOf(citing) };
	});
	return { rows, traced };
}

/**
 * Where a set of tests stands together (a requirement's, or a file's cited by its header).
 * @param {TracedTest[]} tests
 * @returns {Standing}
 */
export function standingOf(tests) {
	if (!tests.length) return 'not covered';
	if (tests.some((t) => t.status === 'failed')) return 'failing';
	const passed = tests.filter((t) => t.status === 'passed').length;
	if (passed === tests.length) return 'passed';
	return passed ? 'partly run' : 'not run';
}

/** The counts of the summary line. @param {TraceRow[]} rows */
export function summarise(rows) {
	const covered = rows.filter((r) => r.standing !== 'not covered').length;
	const failing = rows.filter((r) => r.standing === 'failing').length;
	return {
		requirements: rows.length,
		covered,
		notCovered: rows.length - covered,
		failing,
		line: `${rows.length} requirements, ${covered} covered, ${rows.length - covered} not covered, ${failing} failing`
	};
}
