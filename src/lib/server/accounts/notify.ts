/**
 * The mail that accounts send: invitations, reset links and notices of security-relevant changes.
 * Links are built from ORIGIN (the configured public address), never from the request's Host header.
 */
import { env } from '$env/dynamic/private';
import { dev } from '$app/environment';
import { sendMail } from '$lib/server/mail';
import { ROLE_LABELS } from '$lib/roles';
import type { Role } from '$lib/server/db/schema';

/** The public address of the app, from ORIGIN. */
export function publicOrigin(): string {
	const origin = env.ORIGIN?.replace(/\/+$/, '');
	if (origin) return origin;
	if (dev) return 'http://127.0.0.1:5173';
	throw new Error('ORIGIN is not set: links in mail need the public address of the app');
}

export const linkUrl = (token: string) => `${publicOrigin()}/welcome/${token}`;

const signature = '\n\n-- \nGlasscrib, the lab stockroom\n';

export function sendInvite(to: { email: string; name: string }, token: string, hours: number, invitedBy: string) {
	return sendMail({
		to: to.email,
		subject: 'You are invited to Glasscrib',
		text:
			`Hello ${to.name},\n\n${invitedBy} has made you an account on Glasscrib, the lab's stock of lenses.\n` +
			`Choose your password here (the link works once, for ${hours} hours):\n\n${linkUrl(token)}\n\n` +
			`If you did not expect this, ignore this message.` +
			signature
	});
}

export function sendReset(to: { email: string; name: string }, token: string, minutes: number) {
	return sendMail({
		to: to.email,
		subject: 'Choose a new Glasscrib password',
		text:
			`Hello ${to.name},\n\nSomeone (hopefully you) asked to reset your Glasscrib password.\n` +
			`Choose a new one here (the link works once, for ${minutes} minutes):\n\n${linkUrl(token)}\n\n` +
			`If you did not ask for this, ignore this message: your password stays as it is.` +
			signature
	});
}

/** Notices never fail the change they report: a mail problem is logged and the change stands. */
async function notice(to: string, subject: string, text: string) {
	try {
		await sendMail({ to, subject, text: text + signature });
	} catch (err) {
		console.error(`could not send the notice "${subject}":`, (err as Error).message);
	}
}

export const noticePasswordChanged = (to: string) =>
	notice(
		to,
		'Your Glasscrib password was changed',
		'The password of your Glasscrib account was just changed. If that was not you, ask the lab administrator to lock the account.'
	);

export const noticeTokenCreated = (to: string, tokenName: string) =>
	notice(
		to,
		'A new Glasscrib API token',
		`An API token named "${tokenName}" was created for your Glasscrib account. If that was not you, revoke it on your account page and change your password.`
	);

export const noticeRoleChanged = (to: string, role: Role) =>
	notice(to, 'Your Glasscrib role changed', `Your Glasscrib role is now: ${ROLE_LABELS[role]}.`);

export const noticeTwoStepOn = (to: string) =>
	notice(
		to,
		'Two-step sign-in is on for your Glasscrib account',
		'Two-step sign-in was just turned on for your Glasscrib account: signing in now also asks for a code from your authenticator app. If that was not you, ask the lab administrator to lock the account.'
	);

export const noticeTwoStepOff = (to: string) =>
	notice(
		to,
		'Two-step sign-in is off for your Glasscrib account',
		'Two-step sign-in was just turned off for your Glasscrib account: signing in asks only for your password again. If that was not you, change your password and ask the lab administrator to lock the account.'
	);

export const noticeTwoStepCleared = (to: string, byName: string) =>
	notice(
		to,
		'Your Glasscrib two-step sign-in was removed',
		`${byName}, an administrator, removed two-step sign-in from your Glasscrib account (for example after a lost phone). ` +
			'Sign in with your password and set it up again on your account page; administrators need it for the admin pages. ' +
			'If you did not ask for this, tell the lab administrator.'
	);
