import { ApiError } from '$lib/server/api/http';

/**
 * Reads a multipart/form-data body: 415 for another type, 413 before reading when the declared
 * length is above `maxBytes`, 400 when it does not parse.
 */
export async function readMultipart(request: Request, maxBytes: number): Promise<FormData> {
	const type = (request.headers.get('content-type') ?? '').toLowerCase();
	if (!type.startsWith('multipart/form-data')) {
		throw new ApiError(415, 'unsupported-media-type', 'Send the file as multipart/form-data (field "file").');
	}
	const length = Number(request.headers.get('content-length') ?? NaN);
	if (Number.isFinite(length) && length > maxBytes) {
		throw new ApiError(413, 'too-large', `The upload is ${(length / (1024 * 1024)).toFixed(1)} MB; at most ${Math.round(maxBytes / (1024 * 1024))} MB may be sent at once.`);
	}
	try {
		return await request.formData();
	} catch (err) {
		if (err && typeof err === 'object' && 'status' in err && (err as { status: number }).status === 413) {
			throw new ApiError(413, 'too-large', `The upload is too large: at most ${Math.round(maxBytes / (1024 * 1024))} MB may be sent at once.`);
		}
		throw new ApiError(400, 'invalid-multipart', 'The upload could not be read as multipart/form-data.');
	}
}

/** The one file in field `name`, or 400. */
export function fileField(form: FormData, name = 'file'): File {
	const f = form.get(name);
	if (!(f instanceof File)) throw new ApiError(400, 'no-file', `Attach the file in the form field "${name}".`, { [name]: 'Choose a file.' });
	return f;
}
