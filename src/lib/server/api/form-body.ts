/**
 * Form posts to pages: one place that turns a body the server cannot read into a 400.
 *
 * Every form action reads its body with `request.formData()`. A truncated or malformed multipart
 * body makes that throw a TypeError, which used to surface as a 500 from every action. This hook
 * replaces the request's `formData` with one that answers 400 instead (`error(400)`: the action's
 * JSON `{ type: 'error' }` for an enhanced form, the error page otherwise), and that also refuses
 * text fields holding NUL, other control characters or lone surrogates (`badTextReason`), so no
 * action has to repeat either check. Streaming uploads (`readMultipartStream`) read `request.body`
 * and are not touched. The API reads JSON through `readJson`, which does the same for its bodies.
 */
import { error, type Handle } from '@sveltejs/kit';
import { badTextReason } from '$lib/input';

const FORM_TYPE = /^\s*(multipart\/form-data|application\/x-www-form-urlencoded|text\/plain)\b/i;

async function checkedForm(read: () => Promise<FormData>): Promise<FormData> {
	let form: FormData;
	try {
		form = await read();
	} catch {
		error(400, 'The form arrived incomplete or malformed. Send it again.');
	}
	for (const [name, value] of form) {
		if (typeof value !== 'string') continue;
		const reason = badTextReason(value) ?? badTextReason(name);
		if (reason) error(400, `${name.slice(0, 60)}: ${reason}`);
	}
	return form;
}

/** Wraps `event.request.formData` of a form post to a page (see the module note). */
export const formBody: Handle = async ({ event, resolve }) => {
	const { request } = event;
	if (request.method !== 'POST' || event.url.pathname.startsWith('/api/') || !FORM_TYPE.test(request.headers.get('content-type') ?? '')) {
		return resolve(event);
	}
	const read = request.formData.bind(request);
	let once: Promise<FormData> | undefined;
	Object.defineProperty(request, 'formData', { configurable: true, value: () => (once ??= checkedForm(read)) });
	return resolve(event);
};
