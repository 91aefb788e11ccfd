import nodemailer, { type Transporter } from 'nodemailer';
import { env } from '$env/dynamic/private';
import { withTimeout } from './storage';

/**
 * Outgoing e-mail (7/10) through nodemailer over SMTP_URL — the SMTP fake in development and
 * tests, the site's mail server in production. Messages are sent from the outbox after the
 * transaction that caused them commits, so mail never blocks or fails the work.
 */
let transport: Transporter | undefined;

export function mailer(): Transporter {
	if (!transport) {
		if (!env.SMTP_URL) throw new Error('SMTP_URL is not set');
		transport = nodemailer.createTransport(env.SMTP_URL, {
			connectionTimeout: 5000,
			greetingTimeout: 5000,
			socketTimeout: 10000
		});
	}
	return transport;
}

export const mailFrom = () => env.MAIL_FROM || 'Countersign <countersign@localhost>';

/** "ok", or what is wrong in a few words, within a time limit (GET /api/v1/health). */
export async function checkMail(target?: Transporter, timeoutMs = 3000): Promise<string> {
	return withTimeout(
		(target ?? mailer()).verify().then(() => 'ok'),
		timeoutMs,
		(e) => `${(e as { code?: string }).code ?? 'error'}: the mail server does not answer`
	);
}
