// The SMTP fake: an SMTP server on loopback that keeps each message it accepts as an .eml file
// (7/10), so that tests can read what arrived. The app sends through nodemailer configured by
// SMTP_URL, so the site's real mail server works in production without code changes.
//   node fakes/smtp.js --port 2525 --directory .data/mail
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { SMTPServer } from 'smtp-server';

const { values } = parseArgs({
	options: {
		port: { type: 'string', default: '2525' },
		directory: { type: 'string', default: '.data/mail' }
	}
});
mkdirSync(values.directory, { recursive: true });
let count = 0;
const server = new SMTPServer({
	authOptional: true,
	disabledCommands: ['STARTTLS'],
	banner: 'Countersign SMTP fake',
	size: 10 * 1024 * 1024,
	onData(stream, session, callback) {
		const chunks = [];
		stream.on('data', (c) => chunks.push(c));
		stream.on('end', () => {
			if (stream.sizeExceeded) return callback(new Error('Message too large'));
			count++;
			const name = `${new Date().toISOString().replace(/[:.]/g, '-')}-${process.pid}-${count}.eml`;
			// The envelope first, as headers a reader can take (the fake's own; not part of the message).
			const envelope =
				`X-Fake-Mail-From: ${session.envelope.mailFrom ? session.envelope.mailFrom.address : ''}\r\n` +
				`X-Fake-Rcpt-To: ${session.envelope.rcptTo.map((r) => r.address).join(', ')}\r\n`;
			mkdirSync(values.directory, { recursive: true });
			writeFileSync(
				join(values.directory, name),
				Buffer.concat([Buffer.from(envelope), ...chunks])
			);
			callback();
		});
	}
});
server.on('error', (e) => console.error(`[smtp-fake] ${e.message}`));
server.listen(Number(values.port), '127.0.0.1', () =>
	console.log(`[smtp-fake] listening on 127.0.0.1:${values.port}, messages in ${values.directory}`)
);
for (const signal of ['SIGINT', 'SIGTERM'])
	process.on(signal, () => server.close(() => process.exit(0)));
