import nodemailer, { type Transporter } from 'nodemailer';
import { env } from '$env/dynamic/private';

/**
 * Time limits of every SMTP delivery, so that a mail server that hangs (accepts and never answers)
 * cannot hold a request: to connect, for the server's greeting, the longest silence on the
 * connection, and the whole delivery (after which the delivery is given up and an error thrown).
 */
export const MAIL_TIMEOUTS = { connectMs: 3000, greetingMs: 3000, idleMs: 5000, totalMs: 9000 };

/** The mail server did not finish in time. */
export class MailTimeout extends Error {
	constructor(ms: number) {
		super(`the mail server did not accept the message within ${Math.round(ms / 1000)} s`);
	}
}

export type MailMessage = { to: string | string[]; subject: string; text: string; html?: string };

/** The sender address of every message. */
export const mailFrom = () => env.MAIL_FROM || 'Glasscrib <glasscrib@localhost>';

/** Strips CR/LF so nothing user-supplied can add mail headers. */
export const headerSafe = (s: string) => s.replace(/[\r\n]+/g, ' ').slice(0, 300);

/** A sender through one SMTP URL with the time limits (MAIL_TIMEOUTS, or the given ones). */
export function createMailer(url: string, from: () => string = mailFrom, timeouts: Partial<typeof MAIL_TIMEOUTS> = {}) {
	const t = { ...MAIL_TIMEOUTS, ...timeouts };
	const local = /^smtp:\/\/(127\.|localhost)/.test(url);
	const transport: Transporter = nodemailer.createTransport({
		url,
		secure: false,
		...(local ? { ignoreTLS: true } : {}),
		connectionTimeout: t.connectMs,
		greetingTimeout: t.greetingMs,
		socketTimeout: t.idleMs
	});
	return async (message: MailMessage) => {
		const to = (Array.isArray(message.to) ? message.to : [message.to]).map(headerSafe);
		let timer: ReturnType<typeof setTimeout> | undefined;
		const deadline = new Promise<never>((_, reject) => {
			timer = setTimeout(() => reject(new MailTimeout(t.totalMs)), t.totalMs);
		});
		const sending = transport.sendMail({ from: from(), to, subject: headerSafe(message.subject), text: message.text, html: message.html });
		sending.catch(() => undefined); // after a timeout, its later failure is not news
		try {
			await Promise.race([sending, deadline]);
		} finally {
			clearTimeout(timer);
		}
	};
}

let send: ReturnType<typeof createMailer> | undefined;

/** Sends one plain-text message (with an optional HTML part) through SMTP_URL. */
export async function sendMail(message: MailMessage) {
	if (!send) {
		if (!env.SMTP_URL) throw new Error('SMTP_URL is not set');
		send = createMailer(env.SMTP_URL);
	}
	await send(message);
}
