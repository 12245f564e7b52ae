import nodemailer, { type Transporter } from 'nodemailer';
import { env } from '$env/dynamic/private';

let transport: Transporter | undefined;

function transporter(): Transporter {
	if (!transport) {
		if (!env.SMTP_URL) throw new Error('SMTP_URL is not set');
		const local = /^smtp:\/\/(127\.|localhost)/.test(env.SMTP_URL);
		transport = nodemailer.createTransport({ url: env.SMTP_URL, secure: false, ...(local ? { ignoreTLS: true } : {}) });
	}
	return transport;
}

/** The sender address of every message. */
export const mailFrom = () => env.MAIL_FROM || 'Glasscrib <glasscrib@localhost>';

/** Strips CR/LF so nothing user-supplied can add mail headers. */
export const headerSafe = (s: string) => s.replace(/[\r\n]+/g, ' ').slice(0, 300);

/** Sends one plain-text message (with an optional HTML part) through SMTP_URL. */
export async function sendMail(message: { to: string | string[]; subject: string; text: string; html?: string }) {
	const to = (Array.isArray(message.to) ? message.to : [message.to]).map(headerSafe);
	await transporter().sendMail({ from: mailFrom(), to, subject: headerSafe(message.subject), text: message.text, html: message.html });
}
