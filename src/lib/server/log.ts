/**
 * The server's log: one JSON object per line on stdout/stderr. JSON escapes CR and LF, so
 * nothing a user types can start a forged line (REQUIREMENTS SE10). Never pass secrets,
 * passwords, tokens or cookies in `fields`.
 */
type Level = 'info' | 'warn' | 'error';
type Fields = Record<string, unknown>;

export function formatLine(level: Level, message: string, fields: Fields = {}, now = new Date()) {
	// Fields cannot overwrite the line's own time, level or message.
	const { time: _time, level: _level, message: _message, ...rest } = fields;
	return JSON.stringify({ time: now.toISOString(), level, message, ...rest });
}

function write(level: Level, message: string, fields?: Fields) {
	const line = formatLine(level, message, fields);
	if (level === 'info') console.log(line);
	else console.error(line);
}

export const log = {
	info: (message: string, fields?: Fields) => write('info', message, fields),
	warn: (message: string, fields?: Fields) => write('warn', message, fields),
	error: (message: string, fields?: Fields) => write('error', message, fields)
};
