import { describe, expect, it } from 'vitest';
import { formatLine } from './log';

// REQUIREMENTS SE10 (ASVS 16.4): input cannot forge a log line.
describe('formatLine', () => {
	const at = new Date('2026-12-01T18:49:00.123Z');

	it('writes one JSON object with time, level and message first', () => {
		expect(formatLine('info', 'server stopped', { reason: 'SIGTERM' }, at)).toBe(
			'{"time":"2026-12-01T18:49:00.123Z","level":"info","message":"server stopped","reason":"SIGTERM"}'
		);
	});

	it('keeps CR and LF from user input inside the one line', () => {
		const forged =
			'tech1\r\n{"time":"2026-12-01T00:00:00.000Z","level":"info","message":"signed in"}';
		const line = formatLine('warn', 'sign-in failed', { username: forged }, at);
		expect(line.split(/[\r\n]/)).toHaveLength(1);
		expect(JSON.parse(line).username).toBe(forged);
	});

	it('does not let a field replace the time, level or message', () => {
		const fields = { time: '1999-01-01', level: 'info', message: 'all fine', detail: 'x' };
		const line = JSON.parse(formatLine('error', 'boom', fields, at));
		expect(line).toEqual({
			time: '2026-12-01T18:49:00.123Z',
			level: 'error',
			message: 'boom',
			detail: 'x'
		});
	});
});
