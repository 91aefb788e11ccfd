// The traceability report as HTML (self-contained: styles and Noto Sans inlined, printable,
// readable by a screen reader) and as PDF (pdf-lib with the Noto Sans woff subsets the app ships,
// as src/lib/server/pdf/record.ts embeds them). Both hold the same sections, in the same order.
import fontkit from '@pdf-lib/fontkit';
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { PDFDocument, rgb } from 'pdf-lib';
import { CITATION_RULE, standingOf } from './traceability.js';

/** @typedef {import('./traceability.js').PartRun} PartRun */
/** @typedef {import('./traceability.js').TraceRow} TraceRow */
/** @typedef {import('./traceability.js').TracedTest} TracedTest */
/** @typedef {import('./traceability.js').Outcome} Outcome */
/** @typedef {import('./traceability.js').Standing} Standing */
/**
 * Everything the report shows.
 * @typedef {{
 *   generatedAt: Date,
 *   commit: string | null,
 *   changedFiles: number | null,
 *   requirementsFile: string,
 *   sharedMissing: string[] | null,
 *   runs: PartRun[],
 *   stale: { part: string, files: string[] }[],
 *   rows: TraceRow[],
 *   traced: TracedTest[],
 *   unknown: import('./traceability.js').UnknownCitation[],
 *   summary: ReturnType<typeof import('./traceability.js').summarise>
 * }} Report
 */

const require = createRequire(import.meta.url);
const fontFile = (/** @type {string} */ name) =>
	readFileSync(require.resolve(`@fontsource/noto-sans/files/noto-sans-${name}`));

const PART_NAMES = { unit: 'Unit tests', integration: 'Integration tests', e2e: 'Browser tests' };
const CITED_BY = {
	title: 'in its title',
	comment: 'in a comment at the test',
	describe: 'in its describe block',
	file: 'in the file’s header'
};
/** A shape beside each word, so that no status rests on colour alone. */
const SHAPE = /** @type {Record<Outcome | Standing, string>} */ ({
	passed: '●',
	failed: '▲',
	failing: '▲',
	skipped: '◇',
	'not run': '○',
	'partly run': '◐',
	'not covered': '□'
});

/** Date and time in UTC, to the minute, with the zone said. */
export const utc = (/** @type {Date | null} */ d) =>
	d ? `${d.toISOString().slice(0, 16).replace('T', ' ')} UTC` : '—';

/** One line about a part of the run. @param {PartRun} r */
export function runLine(r) {
	if (!r.present) return `not run — no ${r.report}`;
	const parts = [`started ${utc(r.startedAt)}`, `${r.passed} passed`, `${r.failed} failed`];
	if (r.skipped) parts.push(`${r.skipped} skipped`);
	return [parts.join(', '), ...r.notes].join('; ');
}

const testName = (/** @type {TracedTest} */ t) => t.titles.join(' › ');
const testWhere = (/** @type {TracedTest} */ t) => `${PART_NAMES[t.part]} · ${t.file}:${t.line}`;
const commitText = (/** @type {Report} */ r) =>
	r.commit
		? `${r.commit}${r.changedFiles ? ` (with ${r.changedFiles} changed file${r.changedFiles === 1 ? '' : 's'} not committed)` : ''}`
		: 'unknown (not a git checkout)';

/** The facts of the run, as label and value, shared by both forms. @param {Report} r */
function runFacts(r) {
	return [
		['Report made', utc(r.generatedAt)],
		['Commit', commitText(r)],
		[
			'Requirements list',
			`${r.requirementsFile}: ${r.rows.length} requirements${
				r.sharedMissing === null
					? ''
					: r.sharedMissing.length
						? `; missing from it: ${r.sharedMissing.join(', ')} of ../shared/REQUIREMENTS.md`
						: '; holds every ID of ../shared/REQUIREMENTS.md'
			}`
		],
		[
			'Test files read',
			`${new Set(r.traced.map((t) => t.file)).size} files, ${r.traced.length} tests`
		],
		...r.runs.map((run) => [`${PART_NAMES[run.part]} (${run.report})`, runLine(run)]),
		...r.stale.map((s) => [
			`Changed after the ${s.part} run`,
			`${s.files.join(', ')} (their results may not hold for the code as it is now)`
		])
	];
}

/**
 * A requirement's tests as the matrix lists them: each test that cites it in its title, a comment
 * or its describe block, then one entry per file whose header cites it.
 * @param {TraceRow} row
 * @returns {({ test: TracedTest } | { file: string, tests: TracedTest[], standing: Standing, others: boolean })[]}
 */
export function entriesOf(row) {
	const id = row.requirement.id;
	const direct = row.tests.filter((t) => t.cites.get(id) !== 'file');
	/** @type {Map<string, TracedTest[]>} */
	const byFile = new Map();
	for (const t of row.tests)
		if (t.cites.get(id) === 'file') byFile.set(t.file, [...(byFile.get(t.file) ?? []), t]);
	return [
		...direct.map((test) => ({ test })),
		...[...byFile].map(([file, tests]) => ({
			file,
			tests,
			standing: standingOf(tests),
			others: direct.some((t) => t.file === file)
		}))
	];
}

/** "12 passed, 1 failed" of a file's tests. @param {TracedTest[]} tests */
export function countsText(tests) {
	/** @type {Outcome[]} */
	const order = ['passed', 'failed', 'skipped', 'not run'];
	return order
		.map((o) => [o, tests.filter((t) => t.status === o).length])
		.filter(([, n]) => n)
		.map(([o, n]) => `${n} ${o}`)
		.join(', ');
}

/** @param {{ file: string, tests: TracedTest[], others: boolean }} e */
const fileEntryText = (e) =>
	`${e.others ? `the other ${e.tests.length} tests` : `every test (${e.tests.length})`} of ${e.file} (${PART_NAMES[/** @type {TracedTest} */ (e.tests[0]).part]}): ${countsText(e.tests)}`;

const failedTests = (/** @type {Report} */ r) => r.traced.filter((t) => t.status === 'failed');
const uncovered = (/** @type {Report} */ r) => r.rows.filter((x) => x.standing === 'not covered');

// ——— HTML ———

const esc = (/** @type {string} */ s) =>
	s.replace(
		/[&<>"']/g,
		(c) =>
			/** @type {Record<string, string>} */ ({
				'&': '&amp;',
				'<': '&lt;',
				'>': '&gt;',
				'"': '&quot;',
				"'": '&#39;'
			})[c] ?? c
	);

/** @param {Outcome | Standing} s */
const status = (s) =>
	`<span class="status s-${s.replace(' ', '-')}"><span aria-hidden="true">${SHAPE[s]}</span> ${esc(s)}</span>`;

/** @param {Report} r @returns {string} */
export function renderHtml(r) {
	const font = (/** @type {string} */ name) =>
		`data:font/woff2;base64,${fontFile(`${name}.woff2`).toString('base64')}`;
	const groups = [...new Set(r.rows.map((x) => x.requirement.group))];
	const failed = failedTests(r);
	const none = uncovered(r);
	const html = [];
	html.push(`<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Requirements traceability — Countersign — ${esc(utc(r.generatedAt))}</title>
<style>
@font-face { font-family: 'Noto Sans'; font-weight: 400; src: url(${font('latin-400-normal')}) format('woff2'); }
@font-face { font-family: 'Noto Sans'; font-weight: 700; src: url(${font('latin-700-normal')}) format('woff2'); }
:root { --ink: #1b2230; --muted: #4d5566; --ground: #fbfaf7; --rule: #d6d3c7; --stop: #9b1c22; --ok: #1f5c3a; }
* { box-sizing: border-box; }
body { margin: 0; background: var(--ground); color: var(--ink); font: 15px/1.45 'Noto Sans', sans-serif; font-variant-numeric: tabular-nums; }
main { max-width: 72rem; margin: 0 auto; padding: 1.5rem; }
h1 { font-size: 1.6rem; margin: 0 0 .25rem; }
h2 { font-size: 1.25rem; margin: 2rem 0 .5rem; border-bottom: 1px solid var(--rule); padding-bottom: .25rem; }
h3 { font-size: 1.05rem; margin: 1.25rem 0 .25rem; }
.lead, .basis, .where, .note { color: var(--muted); }
.summary { font-weight: 700; font-size: 1.1rem; }
table { border-collapse: collapse; width: 100%; margin: .5rem 0 1rem; }
caption { text-align: left; font-weight: 700; padding: .25rem 0; }
th, td { text-align: left; vertical-align: top; padding: .4rem .5rem; border-bottom: 1px solid var(--rule); }
th { font-weight: 700; }
thead th { border-bottom: 2px solid var(--ink); }
td.id { white-space: nowrap; font-weight: 700; }
ul.tests { margin: 0; padding: 0; list-style: none; }
ul.tests li + li { margin-top: .35rem; }
.status { white-space: nowrap; font-weight: 700; }
.s-failed, .s-failing { color: var(--stop); }
.s-passed { color: var(--ok); }
.message { display: block; color: var(--stop); }
code { font-size: .92em; }
@media print {
  @page { size: A4; margin: 14mm; }
  body { background: #fff; font-size: 10pt; }
  main { max-width: none; padding: 0; }
  thead { display: table-header-group; }
  tr, li { break-inside: avoid; }
  h2, h3 { break-after: avoid; }
}
</style>
</head>
<body>
<main>
<h1>Requirements traceability</h1>
<p class="lead">Countersign — computerised system validation evidence: each requirement of <code>${esc(r.requirementsFile)}</code>, the tests that cite it and their result in the last run.</p>
<p class="summary" role="status">${esc(r.summary.line)}</p>
<h2 id="run">The run</h2>
<table>
<caption>Where the results come from</caption>
<tbody>
${runFacts(r)
	.map(([k, v]) => `<tr><th scope="row">${esc(k ?? '')}</th><td>${esc(v ?? '')}</td></tr>`)
	.join('\n')}
</tbody>
</table>
<h2 id="not-covered">Requirements no test covers (${none.length})</h2>`);
	html.push(
		none.length
			? `<ul>${none.map((x) => `<li><strong>${esc(x.requirement.id)}</strong> — ${esc(x.requirement.statement)}</li>`).join('\n')}</ul>`
			: '<p>None: every requirement is cited by at least one test.</p>'
	);
	html.push(`<h2 id="failed">Tests that failed (${failed.length})</h2>`);
	html.push(
		failed.length
			? `<ul>${failed
					.map(
						(t) =>
							`<li>${status('failed')} ${esc(testName(t))} <span class="where">(${esc(testWhere(t))}; cites ${esc([...t.cites.keys()].join(', ') || 'no requirement')})</span>${t.message ? `<span class="message">${esc(t.message)}</span>` : ''}</li>`
					)
					.join('\n')}</ul>`
			: `<p>None${r.runs.some((x) => x.present) ? ' in the results read' : ': there are no results of a run'}.</p>`
	);
	html.push(`<h2 id="matrix">Requirement → tests → result</h2>`);
	for (const group of groups) {
		const rows = r.rows.filter((x) => x.requirement.group === group);
		html.push(`<table>
<caption>${esc(group || 'Requirements')}</caption>
<thead><tr><th scope="col">ID</th><th scope="col">Requirement</th><th scope="col">Tests citing it and their result</th><th scope="col">Standing</th></tr></thead>
<tbody>
${rows
	.map(
		(x) => `<tr id="${esc(x.requirement.id)}"><td class="id">${esc(x.requirement.id)}</td>
<td>${esc(x.requirement.statement)}${x.requirement.basis ? `<br><span class="basis">Basis: ${esc(x.requirement.basis)}</span>` : ''}</td>
<td>${
			x.tests.length
				? `<ul class="tests">${entriesOf(x)
						.map((e) =>
							'test' in e
								? `<li>${status(e.test.status)} ${esc(testName(e.test))}<br><span class="where">${esc(testWhere(e.test))}, cited ${esc(CITED_BY[e.test.cites.get(x.requirement.id) ?? 'file'])}</span>${e.test.message ? `<span class="message">${esc(e.test.message)}</span>` : ''}</li>`
								: `<li>${status(e.standing)} ${esc(fileEntryText(e))}<br><span class="where">cited ${esc(CITED_BY.file)}</span>${e.tests
										.filter((t) => t.status === 'failed')
										.map(
											(t) =>
												`<span class="message">failed: ${esc(testName(t))}${t.message ? ` — ${esc(t.message)}` : ''}</span>`
										)
										.join('')}</li>`
						)
						.join('')}</ul>`
				: '<span class="note">No test cites it.</span>'
		}</td>
<td>${status(x.standing)}</td></tr>`
	)
	.join('\n')}
</tbody>
</table>`);
	}
	html.push(
		`<h2 id="unknown">IDs cited by tests that are not in the list (${r.unknown.length})</h2>`
	);
	html.push(
		r.unknown.length
			? `<ul>${r.unknown.map((u) => `<li><strong>${esc(u.id)}</strong> — ${esc(u.file)}:${u.line}</li>`).join('\n')}</ul>`
			: '<p>None.</p>'
	);
	html.push(`<h2 id="rule">How tests are matched to requirements</h2>
${CITATION_RULE.map((p) => `<p>${esc(p)}</p>`).join('\n')}
</main>
</body>
</html>
`);
	return html.join('\n');
}

// ——— PDF ———

const A4 = { width: 595.28, height: 841.89 };
const MARGIN = 48;
const FOOT = 36;
const INK = rgb(0.106, 0.133, 0.188);
const MUTED = rgb(0.3, 0.333, 0.4);
const STOP = rgb(0.608, 0.11, 0.133);
const OK = rgb(0.122, 0.361, 0.227);
const RULE = rgb(0.84, 0.83, 0.78);

/** Characters the shipped subsets lack, spelled out (as the record PDF does). */
const SPELLED = /** @type {Record<string, string>} */ ({
	'→': '->',
	'≥': '>=',
	'≤': '<=',
	'√': 'sqrt',
	'✓': 'done:'
});

/** @typedef {import('pdf-lib').PDFFont} PDFFont */

/**
 * @param {Report} r
 * @returns {Promise<Uint8Array>}
 */
export async function renderPdf(r) {
	const doc = await PDFDocument.create();
	doc.registerFontkit(fontkit);
	/** @type {{ regular: PDFFont[], bold: PDFFont[] }} */
	const fonts = { regular: [], bold: [] };
	// Plain setting, without kerning and ligatures: shaping each line with them is what made the
	// report slow (several seconds for its thousands of lines), and a report needs neither.
	const features = Object.fromEntries(
		['kern', 'liga', 'clig', 'calt', 'ccmp', 'locl', 'rlig', 'mark', 'mkmk', 'rclt', 'curs'].map(
			(f) => [f, false]
		)
	);
	for (const subset of ['latin', 'latin-ext']) {
		for (const [weight, list] of /** @type {const} */ ([
			['400', fonts.regular],
			['700', fonts.bold]
		]))
			list.push(
				await doc.embedFont(fontFile(`${subset}-${weight}-normal.woff`), { subset: true, features })
			);
	}
	doc.setTitle('Requirements traceability — Countersign');
	doc.setSubject(r.summary.line);
	doc.setAuthor('npm run validation-report');
	doc.setCreator('Countersign');
	doc.setProducer('Countersign (pdf-lib)');
	doc.setLanguage('en');
	doc.setCreationDate(r.generatedAt);
	doc.setModificationDate(r.generatedAt);

	/** @type {WeakMap<PDFFont, Set<number>>} */
	const sets = new WeakMap();
	const setOf = (/** @type {PDFFont} */ f) => {
		let s = sets.get(f);
		if (!s) sets.set(f, (s = new Set(f.getCharacterSet())));
		return s;
	};
	/** Text split into runs, each in the first subset that has its glyphs; others become "?". */
	const runs = (/** @type {string} */ text, /** @type {boolean} */ bold) => {
		const list = bold ? fonts.bold : fonts.regular;
		/** @type {{ font: PDFFont, text: string }[]} */
		const out = [];
		for (const raw of [...text.replace(/\s+/g, ' ')].map((c) => SPELLED[c] ?? c).join('')) {
			let i = list.findIndex((f) => setOf(f).has(raw.codePointAt(0) ?? 0));
			const c = i < 0 ? '?' : raw;
			if (i < 0) i = 0;
			const font = /** @type {PDFFont} */ (list[i]);
			const last = out.at(-1);
			if (last && last.font === font) last.text += c;
			else out.push({ font, text: c });
		}
		return out;
	};
	// Shaping text is what takes the time: each word is measured once, at 1 pt, and scaled.
	/** @type {Map<string, number>} */
	const widths = new Map();
	const width = (/** @type {string} */ t, /** @type {number} */ size, bold = false) => {
		const key = `${bold ? 'b' : 'r'}${t}`;
		let w = widths.get(key);
		if (w === undefined) {
			w = runs(t, bold).reduce((sum, x) => sum + x.font.widthOfTextAtSize(x.text, 1), 0);
			widths.set(key, w);
		}
		return w * size;
	};
	const wrap = (
		/** @type {string} */ t,
		/** @type {number} */ size,
		/** @type {number} */ max,
		bold = false
	) => {
		/** @type {string[]} */
		const lines = [];
		const space = width(' ', size, bold);
		let line = '';
		let lineWidth = 0;
		for (const word of t.replace(/\s+/g, ' ').split(' ')) {
			const w = width(word, size, bold);
			if (line && lineWidth + space + w > max) {
				lines.push(line);
				line = word;
				lineWidth = w;
			} else {
				lineWidth = line ? lineWidth + space + w : w;
				line = line ? `${line} ${word}` : word;
			}
		}
		lines.push(line);
		return lines;
	};

	let page = doc.addPage([A4.width, A4.height]);
	let y = A4.height - MARGIN;
	const need = (/** @type {number} */ h) => {
		if (y - h < MARGIN + FOOT) {
			page = doc.addPage([A4.width, A4.height]);
			y = A4.height - MARGIN;
		}
	};
	const draw = (
		/** @type {string} */ t,
		/** @type {number} */ x,
		/** @type {number} */ at,
		/** @type {number} */ size,
		bold = false,
		color = INK
	) => {
		for (const run of runs(t, bold)) {
			page.drawText(run.text, { x, y: at, size, font: run.font, color });
			x += run.font.widthOfTextAtSize(run.text, size);
		}
	};
	/** @param {string} t @param {{ size?: number, bold?: boolean, color?: typeof INK, indent?: number, gap?: number }} [o] */
	const text = (t, o = {}) => {
		const size = o.size ?? 9.5;
		const x = MARGIN + (o.indent ?? 0);
		for (const line of wrap(t, size, A4.width - MARGIN - x, o.bold)) {
			need(size * 1.35);
			y -= size * 1.35;
			draw(line, x, y, size, o.bold, o.color);
		}
		y -= o.gap ?? 2;
	};
	const heading = (/** @type {string} */ t, size = 13) => {
		need(size * 4);
		y -= size * 0.8;
		text(t, { size, bold: true, gap: 4 });
	};
	const rule = () => {
		need(8);
		y -= 4;
		page.drawLine({
			start: { x: MARGIN, y },
			end: { x: A4.width - MARGIN, y },
			thickness: 0.6,
			color: RULE
		});
		y -= 4;
	};
	/** A shape (drawn, not a glyph) and the word of a status, then text wrapped beside them. */
	const statusLine = (
		/** @type {Outcome | Standing} */ s,
		/** @type {string} */ t,
		/** @type {number} */ indent,
		bold = false
	) => {
		const size = 9.5;
		const x = MARGIN + indent;
		const word = s.toUpperCase();
		const color = s === 'failed' || s === 'failing' ? STOP : s === 'passed' ? OK : INK;
		const wordWidth = 78;
		const lines = wrap(t, size, A4.width - MARGIN - x - wordWidth, bold);
		need(size * 1.35 * Math.min(lines.length, 3));
		y -= size * 1.35;
		const cx = x + 4;
		const cy = y + 3.2;
		if (s === 'passed') page.drawCircle({ x: cx, y: cy, size: 3.2, color });
		else if (s === 'failed' || s === 'failing')
			page.drawSvgPath('M 0 -3.6 L 4 3 L -4 3 Z', { x: cx, y: cy, color });
		else if (s === 'not covered')
			page.drawRectangle({
				x: cx - 3,
				y: cy - 3,
				width: 6,
				height: 6,
				borderColor: color,
				borderWidth: 0.9
			});
		else if (s === 'partly run') {
			page.drawCircle({ x: cx, y: cy, size: 3.2, borderColor: color, borderWidth: 0.9 });
			page.drawSvgPath('M 0 -3.2 A 3.2 3.2 0 0 0 0 3.2 Z', { x: cx, y: cy, color });
		} else if (s === 'skipped')
			page.drawSvgPath('M 0 -3.6 L 3.6 0 L 0 3.6 L -3.6 0 Z', {
				x: cx,
				y: cy,
				borderColor: color,
				borderWidth: 0.9
			});
		else page.drawCircle({ x: cx, y: cy, size: 3.2, borderColor: color, borderWidth: 0.9 });
		draw(word, x + 11, y, 7.5, true, color);
		lines.forEach((line, i) => {
			if (i) {
				need(size * 1.35);
				y -= size * 1.35;
			}
			draw(line, x + wordWidth, y, size, bold);
		});
		y -= 2;
	};
	const pair = (/** @type {string} */ label, /** @type {string} */ value) => {
		const size = 9.5;
		const col = 170;
		const l = wrap(label, size, col - 8, true);
		const v = wrap(value || '—', size, A4.width - 2 * MARGIN - col);
		const n = Math.max(l.length, v.length);
		need(n * size * 1.35);
		for (let i = 0; i < n; i++) {
			y -= size * 1.35;
			if (l[i]) draw(/** @type {string} */ (l[i]), MARGIN, y, size, true, MUTED);
			if (v[i]) draw(/** @type {string} */ (v[i]), MARGIN + col, y, size);
		}
		y -= 2;
	};

	text('Requirements traceability', { size: 18, bold: true, gap: 4 });
	text(
		`Countersign — computerised system validation evidence: each requirement of ${r.requirementsFile}, the tests that cite it and their result in the last run.`,
		{ color: MUTED, gap: 8 }
	);
	text(r.summary.line, { size: 11, bold: true, gap: 6 });
	heading('The run');
	for (const [k, v] of runFacts(r)) pair(k ?? '', v ?? '');

	const none = uncovered(r);
	heading(`Requirements no test covers (${none.length})`);
	if (!none.length) text('None: every requirement is cited by at least one test.');
	for (const x of none)
		statusLine('not covered', `${x.requirement.id} — ${x.requirement.statement}`, 0);

	const failed = failedTests(r);
	heading(`Tests that failed (${failed.length})`);
	if (!failed.length)
		text(
			`None${r.runs.some((x) => x.present) ? ' in the results read' : ': there are no results of a run'}.`
		);
	for (const t of failed) {
		statusLine('failed', testName(t), 0);
		text(`${testWhere(t)}; cites ${[...t.cites.keys()].join(', ') || 'no requirement'}`, {
			indent: 78,
			size: 8.5,
			color: MUTED
		});
		if (t.message) text(t.message, { indent: 78, size: 8.5, color: STOP });
	}

	heading('Requirement → tests → result');
	for (const group of [...new Set(r.rows.map((x) => x.requirement.group))]) {
		heading(group || 'Requirements', 11);
		for (const x of r.rows.filter((row) => row.requirement.group === group)) {
			need(60);
			rule();
			statusLine(x.standing, `${x.requirement.id} — ${x.requirement.statement}`, 0, true);
			if (x.requirement.basis)
				text(`Basis: ${x.requirement.basis}`, { indent: 78, size: 8.5, color: MUTED });
			if (!x.tests.length) text('No test cites it.', { indent: 78, size: 8.5, color: MUTED });
			for (const e of entriesOf(x)) {
				if ('test' in e) {
					const t = e.test;
					statusLine(t.status, testName(t), 18);
					text(`${testWhere(t)}, cited ${CITED_BY[t.cites.get(x.requirement.id) ?? 'file']}`, {
						indent: 96,
						size: 8,
						color: MUTED
					});
					if (t.message) text(t.message, { indent: 96, size: 8, color: STOP });
				} else {
					statusLine(e.standing, fileEntryText(e), 18);
					text(`cited ${CITED_BY.file}`, { indent: 96, size: 8, color: MUTED });
					for (const t of e.tests.filter((f) => f.status === 'failed'))
						text(`failed: ${testName(t)}${t.message ? ` — ${t.message}` : ''}`, {
							indent: 96,
							size: 8,
							color: STOP
						});
				}
			}
		}
	}

	heading(`IDs cited by tests that are not in the list (${r.unknown.length})`);
	if (!r.unknown.length) text('None.');
	for (const u of r.unknown) text(`${u.id} — ${u.file}:${u.line}`);

	heading('How tests are matched to requirements');
	for (const p of CITATION_RULE) text(p, { gap: 5 });

	const pages = doc.getPages();
	const foot = `Countersign · requirements traceability · commit ${r.commit ? r.commit.slice(0, 12) : 'unknown'} · made ${utc(r.generatedAt)}`;
	pages.forEach((p, i) => {
		page = p;
		const n = `page ${i + 1} of ${pages.length}`;
		draw(foot, MARGIN, MARGIN - 12, 7.5, false, MUTED);
		draw(n, A4.width - MARGIN - width(n, 7.5), MARGIN - 12, 7.5, false, MUTED);
	});
	return doc.save();
}
